// JSONL shards (plain, gzip, zstd): the source behind `RecordSource` — opening, a streaming line
// index for random access (lineIndex.ts), a decompressed copy for compressed files, growth of a
// file still being written, page reads and whole-file scans. Each line's entry, with the source's
// own findings (syntax, blank lines, encoding, over-long lines) already located, is built by
// textEntry.ts.

import { open, rm, stat, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import type { Finding } from '../findings.js';
import { LineSplitter } from '../text/lines.js';
import { LONG_LINE_BYTES, LineFinder, LineIndex, indexFileRange, nextTurn, walkLines, type LineIndexSnapshot, type LineReader } from './lineIndex.js';
import { buildEntry, classifyLine, formatBytes } from './textEntry.js';
import { jsonlRule, type JsonlRuleId } from './jsonlRules.js';
import type { Entry, FileChange, Progress, RecordSource, ScanOptions, SourceInfo } from './source.js';
import { DecompressError, compressionOf, decompress, type Compression } from './decompress.js';
import { DiskSpaceError, MIN_FREE_BYTES, freeBytes, makeTempDir } from './tempFiles.js';
import { CancelledError, isCancelled } from '../errors.js';

export interface JsonlOptions {
  /** What the bytes are compressed with, when sniffed; else the name decides. */
  compression?: Compression;
  /** Lines longer than this many bytes are findings and are never turned into strings. */
  maxLineBytes?: number;
  /** Decompressing stops past this many times the compressed size (default DEFAULT_MAX_INFLATE_RATIO). */
  maxInflateRatio?: number;
  /** Free bytes a temporary copy always leaves on its disk (default MIN_FREE_BYTES). */
  minFreeBytes?: number;
  /** A read parses up to this many bytes of unparsed lines before it to number records exactly (default 64 MiB). */
  exactCatchUpBytes?: number;
}


/** A finished JSONL line index kept between sessions. */
export interface JsonlIndexSnapshot {
  kind: 'jsonl-lines';
  v: 1;
  sizeBytes: number;
  maxLineBytes: number;
  index: LineIndexSnapshot;
}

export const DEFAULT_MAX_LINE_BYTES = 64 * 1024 * 1024;

/** The one message for a 0-byte file of any format: an empty shard is an error (a failed write, most often), never a pass. */
export const EMPTY_FILE_MESSAGE = 'the file is empty (0 bytes): it holds no records';
const CHUNK_BYTES = 4 * 1024 * 1024;
/** A scan splits its chunks into slices of this size: entries are built and yielded a slice at a time. */
const SCAN_SLICE_BYTES = 64 * 1024;
/** Free disk space is checked again after this many bytes of a temporary copy. */
const DISK_CHECK_BYTES = 64 * 1024 * 1024;
/** A read parses up to this many bytes of not yet parsed lines before it, to number its records exactly. */
const EXACT_CATCH_UP_BYTES = 64 * 1024 * 1024;
/** The indexed bytes' last this many are kept, to tell an appended file from a rewritten one. */
const TAIL_BYTES = 4096;

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
async function* fileChunks(handle: FileHandle, offset: number, size: number, path = '', chunkBytes = CHUNK_BYTES): AsyncGenerator<Uint8Array> {
  const buf = new Uint8Array(chunkBytes);
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

  /** The sparse line index (see lineIndex.ts). */
  private readonly idx: LineIndex;
  private complete = false;
  private readonly findings: Finding[] = [];

  constructor(
    readonly path: string,
    opts: JsonlOptions = {},
  ) {
    this.maxLineBytes = opts.maxLineBytes ?? DEFAULT_MAX_LINE_BYTES;
    this.idx = new LineIndex(this.maxLineBytes, Math.min(LONG_LINE_BYTES, this.maxLineBytes));
    this.compression = opts.compression ?? compressionOf(path);
    this.maxInflateRatio = opts.maxInflateRatio;
    this.minFreeBytes = opts.minFreeBytes ?? MIN_FREE_BYTES;
    this.exactCatchUpBytes = opts.exactCatchUpBytes ?? EXACT_CATCH_UP_BYTES;
  }

  private readonly exactCatchUpBytes: number;

  private readonly maxInflateRatio: number | undefined;
  private readonly minFreeBytes: number;

  /** The file as opened (or last extended): identity, modification time, the indexed bytes' tail. */
  private fileIno = 0;
  private fileDev = 0;
  private mtimeMs = 0;
  private tail: Uint8Array = new Uint8Array(0);
  /** An `extend` is running: reads wait for it (the final line is briefly out of the index). */
  private extending: Promise<FileChange> | null = null;
  /** The file has been seen growing and has not settled: a half-written final line is incomplete. */
  private growing = false;

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
    this.fileIno = st.ino;
    this.fileDev = st.dev;
    this.mtimeMs = st.mtimeMs;
    if (this.compression === 'none') {
      this.handle = fh;
      this.decompressedSize = st.size;
      this.tail = await readTail(fh, st.size);
    } else {
      await fh.close();
    }
    this.opened = true;
    return this.info();
  }

  info(): SourceInfo {
    const facts: Record<string, string> = { compression: this.compression, records: String(this.idx.records) };
    if (this.compression !== 'none' && this.complete) facts.decompressedBytes = String(this.decompressedSize);
    const findings = [...this.findings];
    // One verdict for an empty shard, whatever its format (see EMPTY_FILE_MESSAGE).
    if (this.opened && this.sizeBytes === 0) findings.unshift(this.fileFinding('read-empty', EMPTY_FILE_MESSAGE));
    return {
      format: 'jsonl',
      path: this.path,
      sizeBytes: this.sizeBytes,
      entries: this.idx.lines,
      complete: this.complete,
      facts,
      findings,
    };
  }

  /**
   * Records among the entries indexed so far: lines that are neither blank, over the limit nor
   * learnt to hold no JSON value. Exact once every line has been parsed (`recordsExact`).
   */
  get recordCount(): number {
    return this.idx.records;
  }

  /** Whether every indexed line has been classified, so record numbers are exact. */
  get recordsExact(): boolean {
    return this.complete && this.idx.exactThrough >= this.idx.lines;
  }

  /** Bytes the line index holds. */
  get indexBytes(): number {
    return this.idx.bytes;
  }

  /** The finished index of a plain file, to keep between sessions (null before it is finished). */
  exportIndex(): JsonlIndexSnapshot | null {
    if (!this.complete || this.compression !== 'none' || this.findings.length) return null;
    return { kind: 'jsonl-lines', v: 1, sizeBytes: this.sizeBytes, maxLineBytes: this.maxLineBytes, index: this.idx.snapshot() };
  }

  /**
   * Takes an index kept from an earlier session of the same bytes (the caller keys it by size and
   * modification time; the size and the line limit are checked again here). True when taken: the
   * source is then indexed without reading the file.
   */
  importIndex(kept: unknown): boolean {
    const k = kept as JsonlIndexSnapshot | null;
    if (!this.opened || this.complete || this.indexing || this.compression !== 'none') return false;
    if (k?.kind !== 'jsonl-lines' || k.v !== 1 || k.sizeBytes !== this.sizeBytes || k.maxLineBytes !== this.maxLineBytes) return false;
    if (!this.idx.restore(k.index) || this.idx.end !== this.sizeBytes) {
      this.idx.reset();
      return false;
    }
    this.decompressedSize = this.sizeBytes;
    this.complete = true;
    return true;
  }

  /**
   * What a whole-file pass elsewhere (the analysis) found: `entries` are the lines below `through`
   * that hold no record. Record numbers of later reads are exact below `through`.
   */
  learnNonRecords(entries: Iterable<number>, through: number): void {
    for (const e of entries) this.idx.learnInvalid(e);
    if (this.complete) this.idx.exactThrough = Math.max(this.idx.exactThrough, Math.min(through, this.idx.lines));
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
    this.idx.reset();
    this.complete = false;
    this.findings.length = 0;
  }

  private async buildIndex(opts: ScanOptions): Promise<SourceInfo> {
    await this.open();
    this.resetIndex();
    const { signal, onProgress } = opts;
    const finder = new LineFinder(this.idx);
    const progress = (done: number) => onProgress?.({ done, total: this.sizeBytes, entries: this.idx.lines } satisfies Progress);
    const check = () => {
      if (signal?.aborted) throw new CancelledError('indexing was cancelled');
      if (this.closed) throw new Error(`${this.path}: the source was closed while indexing`);
    };
    check();
    if (this.compression === 'none') {
      const done = await indexFileRange(this.handle!.fd, finder, 0, this.sizeBytes, async (at) => {
        progress(at);
        await nextTurn();
        check();
      });
      // Short of the size seen at open: the file shrank or was replaced underneath us.
      if (done < this.sizeBytes) this.findings.push(this.fileFinding('read-corrupt', new FileShrankError(this.path, done, this.sizeBytes).message));
      else progress(done);
      finder.end();
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
          finder.push(chunk);
          progress(consumed);
        }
      } catch (e) {
        check();
        if (isCancelled(e)) throw e;
        this.findings.push(this.corruptFinding(e, written));
      }
      finder.end();
      this.decompressedSize = written;
      if (written === 0 && this.sizeBytes > 0 && !this.findings.some((f) => f.family === 'read')) {
        this.findings.push(this.fileFinding('read-empty', `the ${this.compression} file decompresses to 0 bytes: it holds no records`));
      }
    }
    this.complete = true;
    progress(this.sizeBytes);
    return this.info();
  }

  /**
   * Looks at the file on disk again. A plain file that grew, whose indexed bytes are still there
   * (the same file — inode and device where the system has them — and the same last bytes where
   * the index ends), is indexed from the start of its unterminated final line, or from where the
   * index ends, to its new size: the start is never read again. A shorter file, another file, other
   * bytes where the indexed ones were, or a compressed file that changed at all: open it again.
   */
  extend(opts: { settled?: boolean } = {}): Promise<FileChange> {
    if (!this.extending) {
      this.extending = this.extendNow().finally(() => {
        this.extending = null;
      });
    }
    return this.extending.then((r) => {
      if (opts.settled && r.change === 'none') this.growing = false;
      return r;
    });
  }

  private async extendNow(): Promise<FileChange> {
    await this.open();
    const seen = (change: FileChange['change']): FileChange => ({ change, info: this.info() });
    // An index in progress reads up to the size seen at open; growth is looked at after it.
    if (this.indexing) await this.indexing.catch(() => undefined);
    if (this.closed) throw new Error(`${this.path}: the source was closed`);
    let st;
    try {
      st = await stat(this.path);
    } catch {
      return seen('replaced');
    }
    if (!st.isFile()) return seen('replaced');
    const known = this.fileIno !== 0 && st.ino !== 0;
    if (known && (st.ino !== this.fileIno || st.dev !== this.fileDev)) return seen('replaced');
    if (st.size < this.sizeBytes) return seen('shorter');
    if (st.size === this.sizeBytes && st.mtimeMs === this.mtimeMs) return seen('none');
    // Written again at the same size (an edit in place): only reading it all again would tell
    // what changed, so it is opened again.
    if (st.size === this.sizeBytes) return seen('replaced');
    if (this.compression !== 'none') return seen('replaced');
    // Without an inode to compare, the bytes are read through the path itself.
    let handle = this.handle!;
    let fresh: FileHandle | null = null;
    if (!known) {
      try {
        fresh = await open(this.path, 'r');
      } catch {
        return seen('replaced');
      }
      handle = fresh;
    }
    try {
      const before = this.tail;
      const now = await readAt(handle, this.sizeBytes - before.length, before.length);
      if (now.length !== before.length || !now.every((b, i) => b === before[i])) return seen('replaced');
      if (fresh) {
        const old = this.handle;
        this.handle = fresh;
        fresh = null;
        await old?.close().catch(() => undefined);
        handle = this.handle!;
      }
      this.mtimeMs = st.mtimeMs;
      if (st.size === this.sizeBytes) return seen('none');
      if (!this.complete) {
        // Not indexed yet: the index, when it runs, reads to the new size.
        this.sizeBytes = this.decompressedSize = st.size;
        this.tail = await readTail(handle, st.size);
        return seen('grew');
      }
      const idx = this.idx;
      await Promise.allSettled([...this.reading]);
      let from = idx.end;
      if (idx.lastUnterminated) {
        from = await idx.lastLineStart(this.lineReader(handle));
        idx.dropLast(from);
      }
      const finder = new LineFinder(idx, from);
      const done = await indexFileRange(handle.fd, finder, from, st.size);
      finder.end();
      this.sizeBytes = this.decompressedSize = done;
      this.tail = await readTail(handle, done);
      if (done < st.size) return seen('shorter');
      this.growing = true;
      return seen('grew');
    } finally {
      await fresh?.close().catch(() => undefined);
    }
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

  /** Builds a line's entry; a line that turns out to hold no JSON value is learnt by the index. */
  private built(line: number, start: number, bytes: Uint8Array | null, length: number): Entry {
    const e = buildEntry(line, start, bytes, length, this.idx.recordsBefore(line), this.maxLineBytes);
    if (e.record === null) this.idx.learnInvalid(line);
    // The final line of a file still being written: half a record, not (yet) a syntax error.
    if (this.growing && e.record === null && bytes !== null && line === this.idx.lines - 1 && this.idx.lastUnterminated && e.findings.some((f) => f.rule === 'json-syntax')) {
      e.findings = e.findings.filter((f) => f.rule !== 'json-syntax');
      e.incomplete = true;
    }
    return e;
  }

  /** The index's way to read `handle`'s bytes back. */
  private lineReader(handle: FileHandle): LineReader {
    return {
      readAt: (offset, length) => readAt(handle, offset, length),
      readExact: async (offset, length) => {
        const buf = await readAt(handle, offset, length);
        if (buf.length < length) throw this.changedError();
        return buf;
      },
      changed: () => this.changedError(),
    };
  }

  private changedError(): Error {
    return new Error(`${this.path}: the file is shorter than its index (was it changed while open?)`);
  }

  async read(start: number, end: number, opts: { signal?: AbortSignal } = {}): Promise<Entry[]> {
    if (!Number.isInteger(start) || !Number.isInteger(end) || start < 0 || end < start) {
      throw new RangeError(`${this.path}: bad entry range ${start}..${end}`);
    }
    if (this.extending) await this.extending.catch(() => undefined);
    // Registered, so that an extend that starts now waits for this read before it moves the index.
    const reading = this.readNow(start, end, opts);
    this.reading.add(reading);
    try {
      return await reading;
    } finally {
      this.reading.delete(reading);
    }
  }

  /** Reads in flight: an extend waits for them before it changes the index under them. */
  private readonly reading = new Set<Promise<Entry[]>>();

  private async readNow(start: number, end: number, opts: { signal?: AbortSignal }): Promise<Entry[]> {
    const idx = this.idx;
    if (end > idx.lines) {
      throw new RangeError(`${this.path}: entries ${start}..${end} are not indexed yet (${idx.lines} known${this.complete ? ', index complete' : ''})`);
    }
    if (!this.handle) throw new Error(`${this.path}: not open`);
    if (start === end) return [];
    // Record numbers count the lines before that hold JSON; where those lines have not been parsed
    // yet and are few enough, parse them now. Further on, numbers count every unparsed non-blank
    // line as a record until the analysis (or a scan) has passed them: `recordsExact` says when.
    const from = idx.exactThrough;
    if (from < start && idx.blockOf(start).offset - idx.blockOf(from).offset <= this.exactCatchUpBytes) {
      await this.walk(from, start, false, opts.signal);
    }
    return this.walk(start, end, true, opts.signal);
  }

  /** Entries [start, end) (built, or only classified); parsing them in order extends `exactThrough`. */
  private async walk(start: number, end: number, build: boolean, signal?: AbortSignal): Promise<Entry[]> {
    const idx = this.idx;
    const learning = idx.exactThrough >= start;
    const out: Entry[] = [];
    await walkLines(idx, start, end, this.lineReader(this.handle!), (line, at, bytes, length) => {
      if (build) out.push(this.built(line, at, bytes, length));
      else if (bytes !== null && classifyLine(bytes) !== 'record') idx.learnInvalid(line);
      if (learning) idx.exactThrough = Math.max(idx.exactThrough, line + 1);
    }, signal);
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
    // With a finished index whose record numbers are exact up to there, start at the block of the
    // first wanted line; else from the top, counting records on the way.
    if (this.complete && this.handle && from > 0) {
      if (from >= this.idx.lines) return;
      const block = this.idx.blockOf(from);
      if (this.idx.exactThrough >= block.line) {
        entry = block.line;
        records = this.idx.recordsBefore(block.line);
        byteStart = block.offset;
      }
    }
    // A pass over the lines in order teaches the index which lines hold no JSON value.
    let learning = this.complete && this.idx.exactThrough >= entry;
    const skipParse = opts.exactRecords === false;
    const onLine = (s: number, b: Uint8Array | null, l: number) => {
      const e = entry++;
      if (e >= to) return;
      if (e < from || (opts.want && !opts.want(e))) {
        if (skipParse && e >= from) {
          // Counted as a record if it may hold one; the caller renumbers.
          if (b !== null) records++;
          learning = false;
          return;
        }
        if (b !== null && classifyLine(b) === 'record') records++;
        else if (learning) this.idx.learnInvalid(e);
        if (learning) this.idx.exactThrough = Math.max(this.idx.exactThrough, e + 1);
        return;
      }
      const built = buildEntry(e, s, b, l, records, this.maxLineBytes);
      if (built.record !== null) records++;
      else if (learning) this.idx.learnInvalid(e);
      if (learning) this.idx.exactThrough = Math.max(this.idx.exactThrough, e + 1);
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
          if (signal?.aborted) throw new CancelledError('scanning was cancelled');
          const slice = chunk.subarray(o, Math.min(chunk.length, o + SCAN_SLICE_BYTES));
          splitter.push(slice);
          decompressed += slice.length;
          onProgress?.({ done: seekable ? byteStart + decompressed : consumed, total: seekable ? this.decompressedSize : total, entries: entry });
          for (const e of pending.splice(0)) yield e;
          if (entry >= to) return;
        }
      }
    } catch (e) {
      if (isCancelled(e)) throw e;
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

/** `length` bytes at `offset` (fewer where the file ends first). */
async function readAt(handle: FileHandle, offset: number, length: number): Promise<Uint8Array> {
  const buf = new Uint8Array(length);
  let got = 0;
  while (got < length) {
    const { bytesRead } = await handle.read(buf, got, length - got, offset + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return buf.subarray(0, got);
}

/** The last TAIL_BYTES bytes before `size`. */
function readTail(handle: FileHandle, size: number): Promise<Uint8Array> {
  const from = Math.max(0, size - TAIL_BYTES);
  return readAt(handle, from, size - from);
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
