// JSONL shards (plain, gzip, zstd): a streaming line index for random access, and entries with the
// source's own findings (syntax, blank lines, encoding, over-long lines) already located.

import { open, rm, stat, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import type { Finding } from '../findings.js';
import { MAX_DEPTH, parseLine, scanJson, type ScanNote } from '../json/scan.js';
import { LineSplitter } from '../text/lines.js';
import { decodeLine, hasBom } from '../text/utf8.js';
import { jsonlRule, type JsonlRuleId } from './jsonlRules.js';
import type { Entry, Progress, RecordSource, ScanOptions, SourceInfo } from './source.js';
import { DecompressError, decompress } from './decompress.js';
import { DiskSpaceError, MIN_FREE_BYTES, freeBytes, makeTempDir } from './tempFiles.js';

export interface JsonlOptions {
  /** What the bytes are compressed with, when sniffed; else the name decides. */
  compression?: Compression;
  /** Lines longer than this many bytes are findings and are never turned into strings. */
  maxLineBytes?: number;
  /** Decompressing stops past this many times the compressed size (default DEFAULT_MAX_INFLATE_RATIO). */
  maxInflateRatio?: number;
  /** Free bytes a temporary copy always leaves on its disk (default MIN_FREE_BYTES). */
  minFreeBytes?: number;
}

export type Compression = 'none' | 'gzip' | 'zstd';

export const DEFAULT_MAX_LINE_BYTES = 64 * 1024 * 1024;

/** The one message for a 0-byte file of any format: an empty shard is an error (a failed write, most often), never a pass. */
export const EMPTY_FILE_MESSAGE = 'the file is empty (0 bytes): it holds no records';
const CHUNK_BYTES = 4 * 1024 * 1024;
/** A scan splits its chunks into slices of this size: entries are built and yielded a slice at a time. */
const SCAN_SLICE_BYTES = 64 * 1024;
/** Free disk space is checked again after this many bytes of a temporary copy. */
const DISK_CHECK_BYTES = 64 * 1024 * 1024;
/** A read() groups neighbouring lines into one positional read up to this size. */
const READ_SEGMENT_BYTES = 8 * 1024 * 1024;

// Line kinds kept in the index; the high bit marks the final line without a `\n`.
const KIND_RECORD = 0;
const KIND_BLANK = 1;
const KIND_INVALID = 2;
const KIND_TOO_LONG = 3;
const UNTERMINATED = 0x80;

const strictDecoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
const lenientDecoder = new TextDecoder('utf-8', { fatal: false, ignoreBOM: true });

export function compressionOf(path: string): Compression {
  const lower = path.toLowerCase();
  if (lower.endsWith('.gz')) return 'gzip';
  if (lower.endsWith('.zst')) return 'zstd';
  return 'none';
}

function abortError(what: string): Error {
  const e = new Error(`${what} was cancelled`);
  e.name = 'AbortError';
  return e;
}

function formatBytes(n: number): string {
  if (n < 1024) return `${n} bytes`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
  if (n < 1024 * 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MiB`;
  return `${(n / (1024 * 1024 * 1024)).toFixed(2)} GiB`;
}

function isBlank(text: string): boolean {
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c !== 0x20 && c !== 0x09 && c !== 0x0d && c !== 0x0a) return false;
  }
  return true;
}

function typeName(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'string') return 'a string';
  if (typeof v === 'number') return 'a number';
  if (typeof v === 'boolean') return 'a boolean';
  return typeof v;
}

/**
 * Whether a line's bytes hold a record, decided the same way `buildEntry` decides it but without
 * building findings: native JSON.parse first, the strict scan only where the depth cap could matter.
 */
export function classifyLine(bytes: Uint8Array): number {
  let body = hasBom(bytes) ? bytes.subarray(3) : bytes;
  let end = body.length;
  while (end > 0 && (body[end - 1] === 0x20 || body[end - 1] === 0x09 || body[end - 1] === 0x0d)) end--;
  let start = 0;
  while (start < end && (body[start] === 0x20 || body[start] === 0x09 || body[start] === 0x0d)) start++;
  if (start === end) return KIND_BLANK;
  body = body.subarray(start, end);
  let text: string;
  try {
    text = strictDecoder.decode(body);
  } catch {
    text = lenientDecoder.decode(body);
  }
  try {
    JSON.parse(text);
  } catch {
    return KIND_INVALID;
  }
  // Nesting beyond the cap needs more characters than the cap; only then is the scan needed.
  if (text.length > MAX_DEPTH && !scanJson(text).ok) return KIND_INVALID;
  return KIND_RECORD;
}

interface Located {
  entry: number;
  line: number;
  record: number | null;
}

function makeFinding(rule: JsonlRuleId, message: string, at: Located, column: number | null, pointer: string | null): Finding {
  const r = jsonlRule(rule);
  return { rule, family: r.family, severity: r.severity, message, record: at.record, line: at.line, column, pointer, entry: at.entry };
}

const NOTE_RULE: Record<ScanNote['kind'], JsonlRuleId> = {
  'duplicate-key': 'key-duplicate',
  'unsafe-number': 'number-unsafe',
  'lone-surrogate': 'surrogate-unpaired',
};

/**
 * Turns one line into an Entry. `record` is the record index the line gets if it holds a value.
 * `bytes` is null for a line over the limit, whose `length` alone is reported.
 */
export function buildEntry(entry: number, byteOffset: number, bytes: Uint8Array | null, length: number, record: number, maxLineBytes: number): Entry {
  const line = entry + 1;
  if (bytes === null) {
    const at = { entry, line, record: null };
    return {
      entry, record: null, line, column: 1, byteOffset,
      findings: [makeFinding('line-too-long', `line is ${formatBytes(length)}, over the ${formatBytes(maxLineBytes)} limit; it was not read`, at, 1, null)],
    };
  }
  const decoded = decodeLine(bytes);
  const text = decoded.text;
  const early: Array<[JsonlRuleId, string, number | null]> = [];
  if (decoded.bom) early.push(['bom-present', 'line starts with a UTF-8 byte order mark (U+FEFF); it was skipped', 1]);
  if (decoded.invalid) {
    early.push(['utf8-invalid', `invalid UTF-8 at byte ${decoded.invalid.byteOffset} of the line; shown as U+FFFD`, decoded.invalid.column]);
  }
  const result: Entry = { entry, record: null, line, column: 1, byteOffset, text, findings: [] };
  if (isBlank(text)) {
    const at = { entry, line, record: null };
    for (const [rule, msg, col] of early) result.findings.push(makeFinding(rule, msg, at, col, null));
    result.findings.push(makeFinding('line-blank', 'blank line: a JSON Lines line holds one JSON value', at, 1, null));
    return result;
  }
  const parsed = parseLine(text);
  const isRecord = 'value' in parsed;
  const at = { entry, line, record: isRecord ? record : null };
  for (const [rule, msg, col] of early) result.findings.push(makeFinding(rule, msg, at, col, null));
  if (!isRecord) {
    result.findings.push(makeFinding('json-syntax', `not a JSON value: ${parsed.error.message}`, at, parsed.error.column, null));
  }
  for (const note of parsed.notes) result.findings.push(makeFinding(NOTE_RULE[note.kind], note.detail, at, note.column, note.pointer));
  if (isRecord) {
    result.record = record;
    result.value = parsed.value;
    const v = parsed.value;
    if (v === null || typeof v !== 'object' || Array.isArray(v)) {
      let col = 1;
      while (col <= text.length && isBlank(text[col - 1])) col++;
      result.findings.push(makeFinding('record-not-object', `record is ${typeName(v)}, not a JSON object`, at, col, ''));
    }
  }
  return result;
}

/**
 * Chunks of the decompressed stream; `onInput` reports compressed bytes consumed. Throws a
 * DecompressError (a whole sentence) after yielding everything that decoded.
 */
export function decompressedChunks(path: string, compression: Compression, onInput: (n: number) => void, maxInflateRatio?: number): AsyncGenerator<Uint8Array> {
  if (compression === 'none') throw new Error(`${path}: not compressed`);
  return decompress(path, compression, { onInput, maxInflateRatio });
}

/** Thrown when a plain file is shorter than it was when opened: it changed while being read. */
export class FileShrankError extends Error {
  constructor(
    readonly path: string,
    readonly at: number,
    readonly expected: number,
  ) {
    super(`the file ended at byte ${at} while ${expected} bytes were expected: it was truncated or replaced while being read; what came before was read`);
    this.name = 'FileShrankError';
  }
}

/** Plain-file chunks from `offset` on, read positionally through a shared handle. */
async function* fileChunks(handle: FileHandle, offset: number, size: number, path = ''): AsyncGenerator<Uint8Array> {
  const buf = new Uint8Array(CHUNK_BYTES);
  let pos = offset;
  while (pos < size) {
    const { bytesRead } = await handle.read(buf, 0, Math.min(buf.length, size - pos), pos);
    // Short of the size seen at open: the file shrank or was replaced underneath us.
    if (bytesRead === 0) throw new FileShrankError(path, pos, size);
    pos += bytesRead;
    yield buf.subarray(0, bytesRead);
  }
}

export class JsonlSource implements RecordSource {
  readonly format = 'jsonl' as const;
  readonly compression: Compression;
  private readonly maxLineBytes: number;

  private opened = false;
  private closed = false;
  private sizeBytes = 0;
  /** Plain file, or the decompressed copy in a temporary folder. */
  private handle: FileHandle | null = null;
  private decompressedSize = 0;
  private tempDir: string | null = null;
  private indexing: Promise<SourceInfo> | null = null;

  // The line index: start of each line (plus one slot past the last), kind, and records before it.
  private starts = new Float64Array(1024);
  private kinds = new Uint8Array(1024);
  private recordsBefore = new Uint32Array(1024);
  private count = 0;
  private records = 0;
  private complete = false;
  private readonly findings: Finding[] = [];

  constructor(
    readonly path: string,
    opts: JsonlOptions = {},
  ) {
    this.maxLineBytes = opts.maxLineBytes ?? DEFAULT_MAX_LINE_BYTES;
    this.compression = opts.compression ?? compressionOf(path);
    this.maxInflateRatio = opts.maxInflateRatio;
    this.minFreeBytes = opts.minFreeBytes ?? MIN_FREE_BYTES;
  }

  private readonly maxInflateRatio: number | undefined;
  private readonly minFreeBytes: number;

  async open(): Promise<SourceInfo> {
    if (this.closed) throw new Error(`${this.path}: the source was closed`);
    if (this.opened) return this.info();
    let st;
    try {
      st = await stat(this.path);
    } catch (e) {
      throw new Error(`${this.path}: ${describeFsError(e)}`);
    }
    if (st.isDirectory()) throw new Error(`${this.path}: is a folder, not a shard file`);
    if (!st.isFile()) throw new Error(`${this.path}: is not a regular file`);
    let fh: FileHandle;
    try {
      fh = await open(this.path, 'r');
    } catch (e) {
      throw new Error(`${this.path}: ${describeFsError(e)}`);
    }
    this.sizeBytes = st.size;
    if (this.compression === 'none') {
      this.handle = fh;
      this.decompressedSize = st.size;
    } else {
      await fh.close();
    }
    this.opened = true;
    return this.info();
  }

  info(): SourceInfo {
    const facts: Record<string, string> = { compression: this.compression, records: String(this.records) };
    if (this.compression !== 'none' && this.complete) facts.decompressedBytes = String(this.decompressedSize);
    const findings = [...this.findings];
    // One verdict for an empty shard, whatever its format (see EMPTY_FILE_MESSAGE).
    if (this.opened && this.sizeBytes === 0) findings.unshift(this.fileFinding('read-empty', EMPTY_FILE_MESSAGE));
    return {
      format: 'jsonl',
      path: this.path,
      sizeBytes: this.sizeBytes,
      entries: this.count,
      complete: this.complete,
      facts,
      findings,
    };
  }

  /** Records among the entries indexed so far. */
  get recordCount(): number {
    return this.records;
  }

  index(opts: ScanOptions = {}): Promise<SourceInfo> {
    if (this.complete) return Promise.resolve(this.info());
    if (!this.indexing) {
      this.indexing = this.buildIndex(opts).finally(() => {
        this.indexing = null;
      });
    }
    return this.indexing;
  }

  private resetIndex(): void {
    this.count = 0;
    this.records = 0;
    this.complete = false;
    this.starts[0] = 0;
    this.findings.length = 0;
  }

  private grow(need: number): void {
    if (need <= this.starts.length) return;
    let cap = this.starts.length;
    while (cap < need) cap *= 2;
    const s = new Float64Array(cap);
    s.set(this.starts);
    this.starts = s;
    const k = new Uint8Array(cap);
    k.set(this.kinds);
    this.kinds = k;
    const r = new Uint32Array(cap);
    r.set(this.recordsBefore);
    this.recordsBefore = r;
  }

  private addLine(start: number, bytes: Uint8Array | null, length: number, terminated: boolean): void {
    const i = this.count;
    this.grow(i + 2);
    const kind = bytes === null ? KIND_TOO_LONG : classifyLine(bytes);
    this.starts[i] = start;
    this.starts[i + 1] = start + length + (terminated ? 1 : 0);
    this.kinds[i] = kind | (terminated ? 0 : UNTERMINATED);
    this.recordsBefore[i] = this.records;
    if (kind === KIND_RECORD) this.records++;
    // Published last, so a concurrent read never sees a half-written slot.
    this.count = i + 1;
  }

  private async buildIndex(opts: ScanOptions): Promise<SourceInfo> {
    await this.open();
    this.resetIndex();
    const { signal, onProgress } = opts;
    const splitter = new LineSplitter(this.maxLineBytes, (s, b, l, t) => this.addLine(s, b, l, t));
    const progress = (done: number) => onProgress?.({ done, total: this.sizeBytes, entries: this.count } satisfies Progress);
    const check = () => {
      if (signal?.aborted) throw abortError('indexing');
      if (this.closed) throw new Error(`${this.path}: the source was closed while indexing`);
    };
    check();
    if (this.compression === 'none') {
      let done = 0;
      try {
        for await (const chunk of fileChunks(this.handle!, 0, this.sizeBytes, this.path)) {
          // In slices, each reporting progress: a chunk of tiny lines is millions of lines.
          for (let o = 0; o < chunk.length; o += SCAN_SLICE_BYTES) {
            check();
            const slice = chunk.subarray(o, Math.min(chunk.length, o + SCAN_SLICE_BYTES));
            splitter.push(slice);
            done += slice.length;
            progress(done);
          }
        }
      } catch (e) {
        if (!(e instanceof FileShrankError)) throw e;
        this.findings.push(this.fileFinding('read-corrupt', e.message));
      }
      splitter.end();
      this.decompressedSize = done;
    } else {
      await this.prepareTempFile();
      const out = this.handle!;
      let written = 0;
      let consumed = 0;
      let nextDiskCheck = 0;
      try {
        for await (const chunk of decompressedChunks(this.path, this.compression, (n) => (consumed += n), this.maxInflateRatio)) {
          check();
          if (written >= nextDiskCheck) {
            // The copy must never fill the disk: stop while a margin is left.
            const free = await freeBytes(this.tempDir!);
            if (free - DISK_CHECK_BYTES < this.minFreeBytes) {
              throw new DiskSpaceError(
                `the decompressed copy stopped at ${formatBytes(written)}: ${formatBytes(free)} are left on the temporary folder's disk and ${formatBytes(this.minFreeBytes)} must stay free; lines up to there were read`,
              );
            }
            nextDiskCheck = written + DISK_CHECK_BYTES;
          }
          // Written before the lines are published, so read() always finds their bytes.
          let off = 0;
          while (off < chunk.length) {
            const { bytesWritten } = await out.write(chunk, off, chunk.length - off, written + off);
            off += bytesWritten;
          }
          written += chunk.length;
          this.decompressedSize = written;
          splitter.push(chunk);
          progress(consumed);
        }
      } catch (e) {
        check();
        if ((e as Error)?.name === 'AbortError') throw e;
        this.findings.push(this.corruptFinding(e, written));
      }
      splitter.end();
      this.decompressedSize = written;
      if (written === 0 && this.sizeBytes > 0 && !this.findings.some((f) => f.family === 'read')) {
        this.findings.push(this.fileFinding('read-empty', `the ${this.compression} file decompresses to 0 bytes: it holds no records`));
      }
    }
    this.complete = true;
    progress(this.sizeBytes);
    return this.info();
  }

  private corruptFinding(e: unknown, decompressed: number): Finding {
    if (e instanceof DecompressError) return this.fileFinding(e.problem === 'limit' ? 'read-limit' : 'read-corrupt', e.message.replace(/; (all|everything)[^;]*$/, '') + '; lines up to there were read');
    if (e instanceof DiskSpaceError) return this.fileFinding('read-limit', e.message);
    const what = this.compression === 'gzip' ? 'gzip' : 'zstd';
    const code = (e as NodeJS.ErrnoException)?.code;
    const why = code === 'ENOSPC' ? 'the temporary folder\'s disk is full' : code ? `a system error, ${code}` : 'an unexpected error';
    return this.fileFinding('read-corrupt', `the ${what} stream stopped after ${decompressed} decompressed bytes (${why}); lines up to there were read`);
  }

  private fileFinding(rule: JsonlRuleId, message: string): Finding {
    const r = jsonlRule(rule);
    return { rule, family: r.family, severity: r.severity, message, record: null, line: null, column: null, pointer: null, entry: null };
  }

  private async prepareTempFile(): Promise<void> {
    if (this.handle) {
      await this.handle.close();
      this.handle = null;
    }
    if (!this.tempDir) this.tempDir = await makeTempDir('jsonl');
    this.handle = await open(join(this.tempDir, 'decompressed.jsonl'), 'w+');
  }

  private lineSpan(i: number): { start: number; length: number; kind: number } {
    const k = this.kinds[i];
    const start = this.starts[i];
    const length = this.starts[i + 1] - start - (k & UNTERMINATED ? 0 : 1);
    return { start, length, kind: k & 0x7f };
  }

  async read(start: number, end: number, opts: { signal?: AbortSignal } = {}): Promise<Entry[]> {
    if (!Number.isInteger(start) || !Number.isInteger(end) || start < 0 || end < start) {
      throw new RangeError(`${this.path}: bad entry range ${start}..${end}`);
    }
    if (end > this.count) {
      throw new RangeError(`${this.path}: entries ${start}..${end} are not indexed yet (${this.count} known${this.complete ? ', index complete' : ''})`);
    }
    const handle = this.handle;
    if (!handle) throw new Error(`${this.path}: not open`);
    const out: Entry[] = [];
    let i = start;
    while (i < end) {
      if (opts.signal?.aborted) throw abortError('reading');
      const first = this.lineSpan(i);
      if (first.kind === KIND_TOO_LONG) {
        out.push(buildEntry(i, first.start, null, first.length, this.recordsBefore[i], this.maxLineBytes));
        i++;
        continue;
      }
      // One positional read for a run of neighbouring lines.
      let j = i + 1;
      while (j < end) {
        const s = this.lineSpan(j);
        if (s.kind === KIND_TOO_LONG || this.starts[j + 1] - first.start > READ_SEGMENT_BYTES) break;
        j++;
      }
      const segStart = first.start;
      const segLen = this.starts[j] - segStart;
      const buf = new Uint8Array(segLen);
      let got = 0;
      while (got < segLen) {
        const { bytesRead } = await handle.read(buf, got, segLen - got, segStart + got);
        if (bytesRead === 0) throw new Error(`${this.path}: the file is shorter than its index (was it changed while open?)`);
        got += bytesRead;
      }
      for (let k = i; k < j; k++) {
        const s = this.lineSpan(k);
        const rel = s.start - segStart;
        out.push(buildEntry(k, s.start, buf.subarray(rel, rel + s.length), s.length, this.recordsBefore[k], this.maxLineBytes));
      }
      i = j;
    }
    return out;
  }

  async *scan(opts: ScanOptions = {}): AsyncGenerator<Entry> {
    await this.open();
    const { signal, onProgress } = opts;
    const from = Math.max(0, opts.from ?? 0);
    const to = opts.to ?? Number.POSITIVE_INFINITY;
    if (from >= to) return;
    const pending: Entry[] = [];
    let entry = 0;
    let records = 0;
    let byteStart = 0;
    // With a finished index, start right at the first wanted line.
    if (this.complete && this.handle && from > 0) {
      if (from >= this.count) return;
      entry = from;
      records = this.recordsBefore[from];
      byteStart = this.starts[from];
    }
    const onLine = (s: number, b: Uint8Array | null, l: number) => {
      const e = entry++;
      if (e >= to) return;
      if (e < from || (opts.want && !opts.want(e))) {
        if (b !== null && classifyLine(b) === KIND_RECORD) records++;
        return;
      }
      const built = buildEntry(e, s, b, l, records, this.maxLineBytes);
      if (built.record !== null) records++;
      pending.push(built);
    };
    const splitter = new LineSplitter(this.maxLineBytes, onLine, byteStart);
    let consumed = 0;
    const total = this.sizeBytes;
    const seekable = this.compression === 'none' || (this.complete && this.handle !== null);
    const chunks = seekable
      ? fileChunks(this.handle!, byteStart, this.decompressedSize, this.path)
      : decompressedChunks(this.path, this.compression, (n) => (consumed += n), this.maxInflateRatio);
    let decompressed = 0;
    try {
      for await (const chunk of chunks) {
        // In slices: a chunk of tiny lines is millions of entries, never all built at once, and
        // progress (what the watchdog watches) comes every slice.
        for (let o = 0; o < chunk.length; o += SCAN_SLICE_BYTES) {
          if (signal?.aborted) throw abortError('scanning');
          const slice = chunk.subarray(o, Math.min(chunk.length, o + SCAN_SLICE_BYTES));
          splitter.push(slice);
          decompressed += slice.length;
          onProgress?.({ done: seekable ? byteStart + decompressed : consumed, total: seekable ? this.decompressedSize : total, entries: entry });
          for (const e of pending.splice(0)) yield e;
          if (entry >= to) return;
        }
      }
    } catch (e) {
      if ((e as Error)?.name === 'AbortError') throw e;
      if (e instanceof FileShrankError) {
        if (!this.findings.some((f) => f.message === e.message)) this.findings.push(this.fileFinding('read-corrupt', e.message));
      } else {
        if (seekable) throw e;
        const f = this.corruptFinding(e, decompressed);
        if (!this.findings.some((x) => x.rule === f.rule)) this.findings.push(f);
      }
    }
    splitter.end();
    for (const e of pending.splice(0)) yield e;
    if (!seekable && decompressed === 0 && this.sizeBytes > 0 && !this.findings.some((f) => f.family === 'read')) {
      this.findings.push(this.fileFinding('read-empty', `the ${this.compression} file decompresses to 0 bytes: it holds no records`));
    }
  }

  async close(): Promise<void> {
    this.closed = true;
    const h = this.handle;
    this.handle = null;
    if (h) await h.close().catch(() => undefined);
    if (this.tempDir) {
      const dir = this.tempDir;
      this.tempDir = null;
      await rm(dir, { recursive: true, force: true });
    }
  }
}

function describeFsError(e: unknown): string {
  const code = (e as NodeJS.ErrnoException)?.code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EISDIR':
      return 'is a folder, not a shard file';
    default:
      return `cannot open (${(e as Error)?.message ?? String(e)})`;
  }
}
