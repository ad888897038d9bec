// JSONL shards (plain, gzip, zstd): a streaming line index for random access, and entries with the
// source's own findings (syntax, blank lines, encoding, over-long lines) already located.

import { createReadStream } from 'node:fs';
import { mkdtemp, open, rm, stat, type FileHandle } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createGunzip } from 'node:zlib';
import { Decompress } from 'fzstd';
import type { Finding } from '../findings.js';
import { MAX_DEPTH, parseLine, scanJson, type ScanNote } from '../json/scan.js';
import { LineSplitter } from '../text/lines.js';
import { decodeLine, hasBom } from '../text/utf8.js';
import { jsonlRule, type JsonlRuleId } from './jsonlRules.js';
import type { Entry, Progress, RecordSource, ScanOptions, SourceInfo } from './source.js';

export interface JsonlOptions {
  /** What the bytes are compressed with, when sniffed; else the name decides. */
  compression?: Compression;
  /** Lines longer than this many bytes are findings and are never turned into strings. */
  maxLineBytes?: number;
}

export type Compression = 'none' | 'gzip' | 'zstd';

export const DEFAULT_MAX_LINE_BYTES = 64 * 1024 * 1024;
const CHUNK_BYTES = 4 * 1024 * 1024;
/** Small input pieces bound how much one push into the zstd decoder can expand to. */
const ZSTD_INPUT_BYTES = 64 * 1024;
/** At most 2 KiB of input per push: 512 RLE blocks, 64 MiB of output at the very worst. */
const ZSTD_PUSH_BYTES = 2 * 1024;
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

/** Chunks of the decompressed stream; `onInput` reports compressed bytes consumed. */
export async function* decompressedChunks(path: string, compression: Compression, onInput: (n: number) => void): AsyncGenerator<Uint8Array> {
  if (compression === 'gzip') {
    if ((await stat(path)).size === 0) return; // an empty file is an empty shard, as for zstd
    // Small input pieces: on a bad second member header, only the last piece's output is lost.
    const rs = createReadStream(path, { highWaterMark: 64 * 1024 });
    const gz = createGunzip({ chunkSize: 1024 * 1024 });
    // Own queue instead of for-await: output decoded before an error must still reach the caller.
    const queue: Buffer[] = [];
    let ended = false;
    let failure: unknown = null;
    let wake: (() => void) | null = null;
    const notify = () => {
      const w = wake;
      wake = null;
      w?.();
    };
    gz.on('data', (c: Buffer) => {
      queue.push(c);
      if (queue.length >= 4) gz.pause();
      notify();
    });
    gz.on('end', () => {
      ended = true;
      notify();
    });
    gz.on('error', (e) => {
      failure = e;
      ended = true;
      notify();
    });
    rs.on('data', (b) => onInput(b.length));
    rs.on('error', (e) => gz.destroy(e));
    rs.pipe(gz);
    try {
      for (;;) {
        if (queue.length) {
          const c = queue.shift()!;
          if (queue.length < 4 && !ended) gz.resume();
          yield c;
          continue;
        }
        if (ended) {
          if (failure) throw failure;
          return;
        }
        await new Promise<void>((r) => (wake = r));
      }
    } finally {
      rs.destroy();
      gz.destroy();
    }
  }
  const fh = await open(path, 'r');
  try {
    const size = (await fh.stat()).size;
    let out: Uint8Array[] = [];
    // fzstd reuses its window after the callback returns, so each block is copied.
    const d = new Decompress((data) => {
      if (data.length) out.push(data.slice());
    });
    let pos = 0;
    if (size === 0) d.push(new Uint8Array(0), true);
    while (pos < size) {
      // A fresh buffer each time: the decoder keeps references to input it has not used yet.
      const buf = new Uint8Array(ZSTD_INPUT_BYTES);
      const { bytesRead } = await fh.read(buf, 0, buf.length, pos);
      if (bytesRead === 0) break;
      pos += bytesRead;
      onInput(bytesRead);
      // Small pushes, each drained before the next: a run of RLE blocks cannot pile up gigabytes.
      for (let o = 0; o < bytesRead; o += ZSTD_PUSH_BYTES) {
        const end = Math.min(bytesRead, o + ZSTD_PUSH_BYTES);
        d.push(buf.subarray(o, end), pos >= size && end === bytesRead);
        if (out.length) {
          const ready = out;
          out = [];
          for (const c of ready) yield c;
        }
      }
    }
  } finally {
    await fh.close();
  }
}

/** Plain-file chunks from `offset` on, read positionally through a shared handle. */
async function* fileChunks(handle: FileHandle, offset: number, size: number): AsyncGenerator<Uint8Array> {
  const buf = new Uint8Array(CHUNK_BYTES);
  let pos = offset;
  while (pos < size) {
    const { bytesRead } = await handle.read(buf, 0, Math.min(buf.length, size - pos), pos);
    if (bytesRead === 0) break;
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
  }

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
    return {
      format: 'jsonl',
      path: this.path,
      sizeBytes: this.sizeBytes,
      entries: this.count,
      complete: this.complete,
      facts,
      findings: [...this.findings],
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
      for await (const chunk of fileChunks(this.handle!, 0, this.sizeBytes)) {
        check();
        splitter.push(chunk);
        done += chunk.length;
        progress(done);
      }
      splitter.end();
      this.decompressedSize = done;
    } else {
      await this.prepareTempFile();
      const out = this.handle!;
      let written = 0;
      let consumed = 0;
      try {
        for await (const chunk of decompressedChunks(this.path, this.compression, (n) => (consumed += n))) {
          check();
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
    }
    this.complete = true;
    progress(this.sizeBytes);
    return this.info();
  }

  private corruptFinding(e: unknown, decompressed: number): Finding {
    const r = jsonlRule('read-corrupt');
    const what = this.compression === 'gzip' ? 'gzip' : 'zstd';
    return {
      rule: 'read-corrupt', family: r.family, severity: r.severity,
      message: `${what} stream is corrupt or truncated after ${decompressed} decompressed bytes (${(e as Error)?.message ?? String(e)}); lines up to there were read`,
      record: null, line: null, column: null, pointer: null, entry: null,
    };
  }

  private async prepareTempFile(): Promise<void> {
    if (this.handle) {
      await this.handle.close();
      this.handle = null;
    }
    if (!this.tempDir) this.tempDir = await mkdtemp(join(tmpdir(), 'shardwise-jsonl-'));
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
      ? fileChunks(this.handle!, byteStart, this.decompressedSize)
      : decompressedChunks(this.path, this.compression, (n) => (consumed += n));
    let decompressed = 0;
    try {
      for await (const chunk of chunks) {
        if (signal?.aborted) throw abortError('scanning');
        splitter.push(chunk);
        decompressed += chunk.length;
        onProgress?.({ done: seekable ? byteStart + decompressed : consumed, total: seekable ? this.decompressedSize : total, entries: entry });
        for (const e of pending.splice(0)) yield e;
        if (entry >= to) return;
      }
    } catch (e) {
      if ((e as Error)?.name === 'AbortError' || seekable) throw e;
      if (!this.findings.some((f) => f.rule === 'read-corrupt')) this.findings.push(this.corruptFinding(e, decompressed));
    }
    splitter.end();
    for (const e of pending.splice(0)) yield e;
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
