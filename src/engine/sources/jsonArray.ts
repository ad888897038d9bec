// JSON array shards (.json holding one array of records): a streaming tokenizer finds each
// top-level element's byte range, line and column without parsing the file whole; each element is
// then parsed alone (RFC 8259, `buildElementEntry` in textEntry.ts), so a broken element is one
// finding, not a lost file. A gzip or zstd file is decompressed once, while indexing, into a
// temporary file that pages then read.

import { open, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { Finding } from '../findings.js';
import type { ByteReader, Entry, RecordSource, ScanOptions, SourceInfo } from './source.js';
import { errorText, readFinding } from './columnarRules.js';
import { openFileReader, type ReaderFactory } from './columnar/byteReader.js';
import { compressionOf, type Compression } from './decompress.js';
import { EMPTY_FILE_MESSAGE, FileShrankError, decompressedChunks } from './jsonl.js';
import { DecompressError } from './decompress.js';
import { DiskSpaceError, MIN_FREE_BYTES, freeBytes, makeTempDir } from './tempFiles.js';
import { buildElementEntry, type ElementSpan } from './textEntry.js';
import { isCancelled } from '../errors.js';

export interface JsonArraySourceOptions {
  openReader?: ReaderFactory;
  /** An element longer than this is a finding and is not parsed. */
  maxElementBytes?: number;
  /** Bytes read per step while indexing. */
  chunkBytes?: number;
  /** What the bytes are compressed with, when sniffed; else the name decides. */
  compression?: Compression;
}

const DEFAULT_MAX_ELEMENT_BYTES = 64 * 1024 * 1024;
const WS = new Set([0x20, 0x09, 0x0a, 0x0d]);

export class JsonArraySource implements RecordSource {
  readonly format = 'json-array' as const;
  private reader: ByteReader | null = null;
  private spans: ElementSpan[] = [];
  private current: SourceInfo;
  private indexing: Promise<SourceInfo> | null = null;
  readonly compression: Compression;
  /** The decompressed copy of a compressed file, once indexing has written it. */
  private tempDir: string | null = null;

  constructor(
    readonly path: string,
    private readonly opts: JsonArraySourceOptions = {},
  ) {
    this.compression = opts.compression ?? compressionOf(path);
    this.current = { format: 'json-array', path, sizeBytes: 0, entries: 0, complete: false, findings: [] };
  }

  async open(_signal?: AbortSignal): Promise<SourceInfo> {
    if (!this.reader) {
      this.reader = await (this.opts.openReader ?? openFileReader)(this.path);
      const facts: Record<string, string> = { format: 'JSON array' };
      if (this.compression !== 'none') facts.compression = this.compression;
      this.current = { format: 'json-array', path: this.path, sizeBytes: this.reader.size, entries: 0, complete: false, findings: [], facts };
    }
    return this.info();
  }

  info(): SourceInfo {
    return { ...this.current, findings: [...this.current.findings] };
  }

  index(opts: ScanOptions = {}): Promise<SourceInfo> {
    this.indexing ??= this.runIndex(opts);
    return this.indexing;
  }

  private async runIndex(opts: ScanOptions): Promise<SourceInfo> {
    await this.open(opts.signal);
    const fileFindings: Finding[] = [];
    /** Bytes of (decompressed) text tokenized so far; the text's size once the loop ends. */
    let size = 0;
    // Tokenizer state, carried across chunks.
    let state: 'before' | 'open' | 'element' | 'after' | 'closed' | 'broken' = 'before';
    let depth = 0;
    let inString = false;
    let escaped = false;
    let line = 1;
    let column = 1;
    let cur: ElementSpan | null = null;
    let lastNonWs = -1;
    let sawBom = false;
    const finishElement = () => {
      if (!cur) return;
      cur.length = lastNonWs + 1 - cur.offset;
      this.spans.push(cur);
      cur = null;
    };
    const broken = (message: string) => {
      fileFindings.push(readFinding('array-structure', message, { line, column }));
      state = 'broken';
    };
    for await (const { bytes, done, total } of this.textChunks(opts.signal, fileFindings)) {
      const at = size;
      size += bytes.length;
      for (let k = 0; k < bytes.length; k++) {
        const b = bytes[k];
        const pos = at + k;
        if (pos === 0 && b === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) {
          sawBom = true;
        }
        if (sawBom && pos < 3) continue;
        if (state === 'element') {
          if (inString) {
            if (escaped) escaped = false;
            else if (b === 0x5c) escaped = true;
            else if (b === 0x22) inString = false;
            lastNonWs = pos;
          } else if (b === 0x22) {
            inString = true;
            lastNonWs = pos;
          } else if (b === 0x5b || b === 0x7b) {
            depth++;
            lastNonWs = pos;
          } else if (b === 0x5d || b === 0x7d) {
            if (depth === 0 && b === 0x5d) {
              finishElement();
              state = 'closed';
            } else {
              if (depth > 0) depth--;
              lastNonWs = pos;
            }
          } else if (b === 0x2c && depth === 0) {
            finishElement();
            state = 'open';
          } else if (!WS.has(b)) {
            lastNonWs = pos;
          }
        } else if (!WS.has(b)) {
          if (state === 'before') {
            if (b === 0x5b) state = 'open';
            else broken(`the file does not hold a JSON array: it starts with "${String.fromCharCode(b)}" where "[" was expected`);
          } else if (state === 'open') {
            if (b === 0x5d && this.spans.length === 0) state = 'closed';
            else if (b === 0x2c || b === 0x5d) broken(`an element is missing before "${String.fromCharCode(b)}"`);
            else {
              state = 'element';
              depth = 0;
              cur = { offset: pos, length: 0, line, column };
              lastNonWs = pos;
              k--; // Re-read this byte as the element's first.
              continue;
            }
          } else if (state === 'closed') {
            broken('text follows the end of the array');
          }
        }
        if ((state as string) === 'broken') break;
        // Line and UTF-16 column bookkeeping: continuation bytes add nothing, 4-byte leads add two units.
        if (b === 0x0a) {
          line++;
          column = 1;
        } else if ((b & 0xc0) !== 0x80) column += b >= 0xf0 ? 2 : 1;
      }
      this.current.entries = this.spans.length;
      opts.onProgress?.({ done, total, entries: this.spans.length });
      if ((state as string) === 'broken') break;
    }
    if (state === 'element') {
      const cut = cur as ElementSpan | null;
      if (cut) {
        cut.length = size - cut.offset;
        cut.truncated = true;
        this.spans.push(cut);
      }
      fileFindings.push(readFinding('array-structure', 'the file ends before the array is closed with "]"', { line, column }));
    } else if (state === 'open') {
      fileFindings.push(readFinding('array-structure', 'the file ends before the array is closed with "]"', { line, column }));
    } else if (state === 'before') {
      fileFindings.push(size === 0 ? readFinding('read-empty', EMPTY_FILE_MESSAGE) : readFinding('array-structure', 'the file holds only white space: no JSON array', { line, column }));
    }
    if (sawBom) fileFindings.push(readFinding('array-structure', 'the file starts with a byte order mark, which JSON text must not (RFC 8259 §8.1)', { line: 1, column: 1 }, 'warning'));
    const facts = { ...this.current.facts };
    if (this.compression !== 'none') facts.decompressedBytes = String(size);
    this.current = { ...this.current, entries: this.spans.length, complete: true, findings: fileFindings, facts };
    return this.info();
  }

  /**
   * The text in chunks, with progress in file bytes. A compressed file is written to a temporary
   * copy on the way, which then replaces the reader; a corrupt stream ends the text where it breaks.
   */
  private async *textChunks(signal: AbortSignal | undefined, findings: Finding[]): AsyncGenerator<{ bytes: Uint8Array; done: number; total: number }> {
    const reader = this.reader!;
    const total = reader.size;
    if (this.compression === 'none') {
      const chunk = this.opts.chunkBytes ?? 1 << 20;
      for (let at = 0; at < total; at += chunk) {
        signal?.throwIfAborted();
        const want = Math.min(chunk, total - at);
        const bytes = await reader.read(at, want);
        if (bytes.length < want) {
          findings.push(readFinding('read-corrupt', new FileShrankError(this.path, at + bytes.length, total).message));
          if (bytes.length) yield { bytes, done: at + bytes.length, total };
          return;
        }
        yield { bytes, done: Math.min(total, at + chunk), total };
      }
      return;
    }
    this.tempDir ??= await makeTempDir('json');
    const copy = join(this.tempDir, 'decompressed.json');
    const out = await open(copy, 'w');
    let written = 0;
    let consumed = 0;
    let nextDiskCheck = 0;
    try {
      for await (const bytes of decompressedChunks(this.path, this.compression, (n) => (consumed += n))) {
        signal?.throwIfAborted();
        if (written >= nextDiskCheck) {
          const free = await freeBytes(this.tempDir);
          if (free - (64 << 20) < MIN_FREE_BYTES) {
            throw new DiskSpaceError(`the decompressed copy stopped at ${written} bytes: the temporary folder's disk has ${free} bytes left and ${MIN_FREE_BYTES} must stay free`);
          }
          nextDiskCheck = written + (64 << 20);
        }
        // Written before it is tokenized, so every span found is readable from the copy.
        let off = 0;
        while (off < bytes.length) off += (await out.write(bytes, off, bytes.length - off, written + off)).bytesWritten;
        written += bytes.length;
        yield { bytes, done: consumed, total };
      }
    } catch (e) {
      signal?.throwIfAborted();
      if (isCancelled(e)) throw e;
      if (e instanceof DecompressError || e instanceof DiskSpaceError) {
        const limit = e instanceof DiskSpaceError || e.problem === 'limit';
        findings.push(readFinding(limit ? 'read-limit' : 'read-corrupt', `${e.message.replace(/; (all|everything)[^;]*$/, '')}; elements up to there were read`));
      } else {
        findings.push(readFinding('read-corrupt', `the ${this.compression} stream stopped after ${written} decompressed bytes (${errorText(e)}); elements up to there were read`));
      }
    } finally {
      await out.close();
      this.reader = await openFileReader(copy);
      await reader.close();
    }
  }

  async read(start: number, end: number, opts: { columns?: string[]; signal?: AbortSignal } = {}): Promise<Entry[]> {
    if (!this.current.complete) await this.index({ signal: opts.signal });
    const s = Math.max(0, start);
    const e = Math.min(end, this.spans.length);
    const out: Entry[] = [];
    const max = this.opts.maxElementBytes ?? DEFAULT_MAX_ELEMENT_BYTES;
    // Read runs of small elements in one go; a huge element is never read.
    let k = s;
    while (k < e) {
      opts.signal?.throwIfAborted();
      let j = k;
      let bytes = 0;
      while (j < e && this.spans[j].length <= max && bytes < 8 << 20) {
        bytes = this.spans[j].offset + this.spans[j].length - this.spans[k].offset;
        j++;
      }
      if (j === k) {
        out.push(this.entryOf(k, null));
        k++;
        continue;
      }
      const base = this.spans[k].offset;
      const buf = await this.reader!.read(base, this.spans[j - 1].offset + this.spans[j - 1].length - base);
      for (let m = k; m < j; m++) {
        const sp = this.spans[m];
        out.push(this.entryOf(m, buf.subarray(sp.offset - base, sp.offset - base + sp.length)));
      }
      k = j;
    }
    return out;
  }

  private entryOf(k: number, bytes: Uint8Array | null): Entry {
    return buildElementEntry(k, this.spans[k], bytes, this.opts.maxElementBytes ?? DEFAULT_MAX_ELEMENT_BYTES);
  }

  async *scan(opts: ScanOptions = {}): AsyncIterable<Entry> {
    await this.index({ signal: opts.signal });
    const total = this.spans.length;
    const from = opts.from ?? 0;
    const to = Math.min(opts.to ?? total, total);
    for (let k = from; k < to; k += 1000) {
      const entries = await this.read(k, Math.min(to, k + 1000), { signal: opts.signal });
      for (const e of entries) yield e;
      opts.onProgress?.({ done: Math.min(to, k + 1000) - from, total: to - from, entries: total });
    }
  }

  async close(): Promise<void> {
    const r = this.reader;
    this.reader = null;
    await r?.close();
    if (this.tempDir) await rm(this.tempDir, { recursive: true, force: true });
    this.tempDir = null;
  }
}
