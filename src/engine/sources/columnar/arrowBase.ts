// What the Arrow file and stream sources share: a layout of messages (schema, dictionaries, batches)
// found by reading headers only, and decoding of one batch by handing the library just the messages
// that batch needs.
//
// What the library cannot read (a column type, a body codec) is decided from the metadata by our own
// reading of it (ipc.ts) before the library sees the bytes, and becomes `read-unsupported`; whatever
// the library throws after that is damage (a ReadFailure quoting it), whatever its words.

import { DataType, RecordBatchReader, compressionRegistry, type RecordBatch, type Schema } from 'apache-arrow';

/** Rows a scan turns into entries at a time. */
const SCAN_SLICE_ROWS = 4096;
import type { Finding } from '../../findings.js';
import type { ByteReader, Entry, FormatName, GroupInfo, RecordSource, ScanOptions, SourceInfo } from '../source.js';
import { errorText, readFinding } from '../columnarRules.js';
import { ReadFailure, UnsupportedFeature } from '../../errors.js';
import { openFileReader, type ReaderFactory } from './byteReader.js';
import { registerIpcCodecs } from './codecs.js';
import { CODECS, END_OF_STREAM, IpcFormatError, MESSAGE_DICTIONARY, bodyCodec, unreadableColumns, validateSchemaMessage, type MessageHeader } from './ipc.js';
import { ByteBudgetCache, batchEntries, groupOf, lostEntries } from './rows.js';
import { readRowSlice, sliceable } from './rowSlice.js';
import { schemaColumns } from './toJson.js';
import { EMPTY_FILE_MESSAGE } from '../jsonl.js';

export interface ArrowSourceOptions {
  /** Opens the file for range reads; tests pass a counting reader. */
  openReader?: ReaderFactory;
  /** Bytes of decoded batches kept for paging back and forth. */
  cacheBytes?: number;
  /** The memory cap: a batch whose body is larger is refused with a read-limit finding, not decoded. */
  maxBatchBytes?: number;
}

/** What one batch may hold unless the caller says otherwise (the same default as the Parquet reader's cap). */
export const DEFAULT_MAX_BATCH_BYTES = 1024 * 1024 * 1024;

/** A batch (or the rows of one) over the memory cap. */
class BatchLimitError extends Error {}

export interface Block {
  offset: number;
  metaLength: number;
  bodyLength: number;
}

/** What reading the headers found. */
export interface Layout {
  schema: Block | null;
  /** A schema message built from the footer, for files whose stream part omits it. */
  schemaMessage?: Uint8Array;
  dictionaries: Block[];
  batches: (Block & { rows: number; codec?: string })[];
  facts: Record<string, string>;
  findings: Finding[];
  /** Set when nothing can be decoded (big-endian, future version, no schema). */
  refused?: string;
}

export function ipcFinding(e: unknown, where: string): Finding {
  if (e instanceof IpcFormatError) {
    const rule = e.kind === 'truncated' ? 'read-truncated' : e.kind === 'unsupported' ? 'read-unsupported' : e.kind === 'limit' ? 'read-limit' : 'read-corrupt';
    return readFinding(rule, `${where}: ${e.message}`);
  }
  if (e instanceof UnsupportedFeature) return readFinding('read-unsupported', `${where}: ${e.message}`);
  return readFinding('read-corrupt', `${where}: ${errorText(e)}`);
}

export abstract class ArrowSourceBase implements RecordSource {
  abstract readonly format: FormatName;
  protected reader: ByteReader | null = null;
  protected layout: Layout | null = null;
  protected arrowSchema: Schema | null = null;
  private firstRows: number[] = [];
  private current: SourceInfo;
  private cache: ByteBudgetCache<RecordBatch | Error>;
  /** Row ranges of batches read by byte range (a page), by a hash of batch and rows. */
  private slices: ByteBudgetCache<{ key: string; batch: RecordBatch; base: number }>;
  private schemaBytes: Uint8Array | null = null;
  private dictBytes = new Map<number, Uint8Array>();

  constructor(
    readonly path: string,
    protected readonly opts: ArrowSourceOptions = {},
  ) {
    registerIpcCodecs();
    this.cache = new ByteBudgetCache(opts.cacheBytes ?? 64 * 1024 * 1024);
    this.slices = new ByteBudgetCache(Math.max(1024 * 1024, (opts.cacheBytes ?? 64 * 1024 * 1024) / 4));
    this.current = { format: 'arrow-file', path, sizeBytes: 0, entries: 0, complete: false, findings: [] };
  }

  /** Reads the headers this format needs to place every batch. */
  protected abstract readLayout(reader: ByteReader, signal?: AbortSignal): Promise<Layout>;
  /** Whether `open` already knows every batch (file) or `index` must find them (stream). */
  protected abstract layoutAtOpen: boolean;

  async open(signal?: AbortSignal): Promise<SourceInfo> {
    if (!this.reader) this.reader = await (this.opts.openReader ?? openFileReader)(this.path);
    this.current = { format: this.format, path: this.path, sizeBytes: this.reader.size, entries: 0, complete: false, findings: [] };
    if (this.reader.size === 0) {
      // One verdict for an empty shard, whatever its format.
      this.layout = { schema: null, dictionaries: [], batches: [], facts: {}, findings: [readFinding('read-empty', EMPTY_FILE_MESSAGE)], refused: 'empty' };
      await this.describe(this.layout, true);
      return this.info();
    }
    if (this.layoutAtOpen) await this.loadLayout(signal);
    else await this.loadSchemaOnly();
    return this.info();
  }

  async index(opts: ScanOptions = {}): Promise<SourceInfo> {
    if (!this.reader) await this.open(opts.signal);
    if (!this.layout) await this.loadLayout(opts.signal);
    opts.onProgress?.({ done: this.reader!.size, total: this.reader!.size, entries: this.current.entries });
    return this.info();
  }

  info(): SourceInfo {
    return { ...this.current, findings: [...this.current.findings] };
  }

  /** Stream sources read the schema message at open; the batches wait for `index`. */
  protected async loadSchemaOnly(): Promise<void> {
    const layout = await this.readSchemaLayout(this.reader!);
    await this.describe(layout, false);
  }

  protected readSchemaLayout(_reader: ByteReader): Promise<Layout> {
    return this.readLayout(_reader);
  }

  private async loadLayout(signal?: AbortSignal): Promise<void> {
    const layout = await this.readLayout(this.reader!, signal);
    this.layout = layout;
    await this.describe(layout, true);
  }

  private async describe(layout: Layout, complete: boolean): Promise<void> {
    const findings = [...layout.findings];
    if ((layout.schema || layout.schemaMessage) && !this.arrowSchema) {
      try {
        this.schemaBytes = layout.schemaMessage ?? (await this.messageBytes(layout.schema!, false));
        // Checked by hand first: a type the library cannot read is named from the schema itself, and
        // a fuzzed schema must never reach the library's decoder unchecked.
        const odd = unreadableColumns(this.schemaBytes);
        if (odd.length) {
          throw new UnsupportedFeature(
            `column${odd.length > 1 ? 's' : ''} ${odd.map((c) => `"${c.name}" (${c.type})`).join(', ')}: a type this reader cannot read`,
            odd[0].type,
            odd[0].name,
          );
        }
        validateSchemaMessage(this.schemaBytes);
        this.arrowSchema = decodeSchema(this.schemaBytes);
      } catch (e) {
        findings.push(e instanceof UnsupportedFeature ? readFinding('read-unsupported', e.message) : ipcFinding(e, 'schema message'));
        layout.refused ??= 'the schema does not decode';
      }
    }
    // An uncompressed body holds at least a bit per row in every column but null ones: a header
    // claiming more rows than that is forged, and its rows are not made into entries.
    const fields = this.arrowSchema?.fields ?? [];
    if (fields.length > 0 && !fields.some(function hasNull(f): boolean {
      return DataType.isNull(f.type) || (f.type.children ?? []).some(hasNull);
    })) {
      layout.batches.forEach((b, k) => {
        if (!b.codec && b.rows > b.bodyLength * 8 + 64) {
          findings.push(readFinding('read-corrupt', `batch ${k} declares ${b.rows} rows, more than its ${b.bodyLength}-byte body can hold; it is not read`));
          b.rows = 0;
        }
      });
    }
    const groups: GroupInfo[] = [];
    let first = 0;
    this.firstRows = [];
    const batches = layout.refused ? [] : layout.batches;
    batches.forEach((b, index) => {
      this.firstRows.push(first);
      const g: GroupInfo = { index, rows: b.rows, firstRow: first, compressedBytes: b.bodyLength };
      if (b.codec && this.arrowSchema) g.codecs = Object.fromEntries(this.arrowSchema.fields.map((f) => [f.name, b.codec!]));
      groups.push(g);
      first += b.rows;
    });
    const codecs = [...new Set(batches.map((b) => b.codec ?? 'none'))];
    this.current = {
      format: this.format,
      path: this.path,
      sizeBytes: this.reader!.size,
      entries: complete ? first : 0,
      complete,
      columns: this.arrowSchema ? schemaColumns(this.arrowSchema) : [],
      groups: complete ? groups : undefined,
      facts: { ...layout.facts, ...(complete ? { batches: String(batches.length), compression: codecs.join(', ') || 'none' } : {}) },
      findings,
    };
  }

  private async messageBytes(b: Block, withBody: boolean): Promise<Uint8Array> {
    return this.reader!.read(b.offset, b.metaLength + (withBody ? b.bodyLength : 0));
  }

  /** Decodes batch `k`, reading only its message, the schema and the dictionaries before it. */
  private async decodeBatch(k: number): Promise<RecordBatch | Error> {
    const hit = this.cache.get(k);
    if (hit) return hit;
    const layout = this.layout!;
    const b = layout.batches[k];
    let result: RecordBatch | Error;
    const cap = this.opts.maxBatchBytes ?? DEFAULT_MAX_BATCH_BYTES;
    try {
      if (b.bodyLength > cap) throw new BatchLimitError(`its body is ${b.bodyLength} bytes, over the ${cap}-byte memory cap; its ${b.rows} rows are not read`);
      const parts: Uint8Array[] = [this.schemaBytes!];
      for (const d of layout.dictionaries) {
        // A stream's dictionaries apply from where they appear; a file's all precede its batches.
        if (this.format === 'arrow-stream' && d.offset > b.offset) break;
        let bytes = this.dictBytes.get(d.offset);
        if (!bytes) {
          bytes = await this.messageBytes(d, true);
          this.dictBytes.set(d.offset, bytes);
        }
        parts.push(bytes);
      }
      parts.push(await this.messageBytes(b, true));
      // A body codec the library has no decoder for is named here; the library is not handed the bytes.
      for (let p = 1; p < parts.length; p++) {
        const codec = bodyCodec(parts[p]);
        if (codec === null || typeof compressionRegistry.get(codec)?.decode === 'function') continue;
        const what = p === parts.length - 1 ? 'its body' : `the dictionary batch it needs (at byte ${layout.dictionaries[p - 1].offset})`;
        const name = CODECS[codec] ? `${CODECS[codec]} (codec number ${codec})` : `codec number ${codec}`;
        throw new UnsupportedFeature(`${what} is compressed with ${name}, which this reader cannot decompress (it reads ${CODECS.join(' and ')})`, `codec ${codec}`);
      }
      parts.push(END_OF_STREAM);
      const reader = RecordBatchReader.from(concat(parts));
      const batch = reader.next().value as RecordBatch | undefined;
      if (!batch) throw new ReadFailure('the batch message holds no batch');
      if (batch.numRows !== b.rows) throw new ReadFailure(`the batch holds ${batch.numRows} rows where its header says ${b.rows}`);
      batch.data.children.forEach((child, c) => {
        if (child.length < batch.numRows) {
          throw new ReadFailure(`column "${batch.schema.fields[c]?.name ?? c}" holds ${child.length} values where the batch declares ${batch.numRows} rows`);
        }
      });
      result = batch;
    } catch (e) {
      // Ours (the cap, a feature named above) keep their class; whatever the library threw is damage.
      result = e instanceof BatchLimitError || e instanceof UnsupportedFeature || e instanceof ReadFailure ? e : new ReadFailure(errorText(e), { cause: e });
    }
    this.cache.set(k, result, b.bodyLength + b.metaLength);
    return result;
  }

  /**
   * Rows [from, to) of batch k read by byte range, when the batch is not decoded whole already, its
   * body is uncompressed (a compressed buffer decompresses only from its start) and every column
   * has a flat layout; null sends the caller to the whole batch.
   */
  private async sliceRows(k: number, from: number, to: number): Promise<{ batch: RecordBatch; base: number } | null> {
    const b = this.layout!.batches[k];
    if (this.cache.get(k) || b.codec || !this.arrowSchema || !this.schemaBytes || !sliceable(this.arrowSchema) || to - from >= b.rows) return null;
    const key = `${k}|${from}|${to}`;
    const hash = hashKey(key);
    const hit = this.slices.get(hash);
    if (hit && hit.key === key) return hit;
    try {
      const got = await readRowSlice(this.reader!, this.arrowSchema, b, from, to, this.opts.maxBatchBytes ?? DEFAULT_MAX_BATCH_BYTES);
      if (!got) return null;
      const value = { key, ...got };
      this.slices.set(hash, value, (to - from) * 64 + 1024);
      return value;
    } catch {
      // Over the cap (SliceLimitError) or damaged: the whole-batch path refuses or names it.
      return null;
    }
  }

  async read(start: number, end: number, opts: { columns?: string[]; signal?: AbortSignal; whole?: boolean } = {}): Promise<Entry[]> {
    if (!this.layout) await this.index({ signal: opts.signal });
    const total = this.current.entries;
    const s = Math.max(0, start);
    const e = Math.min(end, total);
    const out: Entry[] = [];
    if (s >= e) return out;
    for (let k = groupOf(this.firstRows, s); k < this.firstRows.length && this.firstRows[k] < e; k++) {
      opts.signal?.throwIfAborted();
      const first = this.firstRows[k];
      const rows = this.layout!.batches[k].rows;
      const from = Math.max(0, s - first);
      const to = Math.min(rows, e - first);
      const slice = opts.whole ? null : await this.sliceRows(k, from, to);
      if (slice) {
        const rows = batchEntries(slice.batch, k, first + slice.base, from - slice.base, to - slice.base, opts.columns);
        // batchEntries counts rows inside the slice; the view wants them inside the batch.
        for (const r of rows) {
          r.rowInGroup = r.entry - first;
          for (const f of r.findings) f.rowInGroup = r.rowInGroup;
        }
        out.push(...rows);
        continue;
      }
      const batch = await this.decodeBatch(k);
      if (batch instanceof BatchLimitError) {
        out.push(...lostEntries(k, first, from, to, 'read-limit', `batch ${k}: ${batch.message}`));
      } else if (batch instanceof Error) {
        const unsupported = batch instanceof UnsupportedFeature;
        out.push(...lostEntries(k, first, from, to, unsupported ? 'read-unsupported' : 'read-corrupt', `batch ${k} does not decode: ${unsupported ? batch.message : errorText(batch)}`));
      } else {
        out.push(...batchEntries(batch, k, first, from, to, opts.columns));
      }
    }
    return out;
  }

  async *scan(opts: ScanOptions = {}): AsyncIterable<Entry> {
    if (!this.layout) await this.index({ signal: opts.signal });
    const total = this.current.entries;
    const from = opts.from ?? 0;
    const to = Math.min(opts.to ?? total, total);
    for (let k = groupOf(this.firstRows, from); k < this.firstRows.length && this.firstRows[k] < to; k++) {
      opts.signal?.throwIfAborted();
      const first = this.firstRows[k];
      const rows = this.layout!.batches[k].rows;
      const end = Math.min(to, first + rows);
      const batch = await this.decodeBatch(k);
      if (batch instanceof Error) {
        // One finding for a batch that does not decode; its claimed rows are not walked one by one.
        if (from <= first) for (const e of await this.read(first, Math.min(end, first + 1), { signal: opts.signal, whole: true })) yield e;
      } else {
        // In slices: a batch of millions of rows never becomes millions of entries at once.
        for (let lo = Math.max(from, first); lo < end; lo += SCAN_SLICE_ROWS) {
          opts.signal?.throwIfAborted();
          for (const e of await this.read(lo, Math.min(end, lo + SCAN_SLICE_ROWS), { signal: opts.signal, columns: undefined, whole: true })) yield e;
        }
      }
      // Scans pass once; keep the cache for paging.
      this.cache.delete(k);
      opts.onProgress?.({ done: Math.min(to, first + rows) - from, total: to - from, entries: total });
    }
  }

  async close(): Promise<void> {
    this.cache.clear();
    this.dictBytes.clear();
    const r = this.reader;
    this.reader = null;
    await r?.close();
  }
}

/** Cache keys are numbers; collisions are caught by comparing the stored key string. */
function hashKey(s: string): number {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return h >>> 0;
}

function decodeSchema(schemaMessage: Uint8Array): Schema {
  const reader = RecordBatchReader.from(concat([schemaMessage, END_OF_STREAM]));
  reader.open();
  if (!reader.schema) throw new Error('no schema in the schema message');
  return reader.schema;
}

function concat(parts: Uint8Array[]): Uint8Array {
  const n = parts.reduce((a, p) => a + p.length, 0);
  const out = new Uint8Array(n);
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

export function headerBlock(h: MessageHeader): Block {
  return { offset: h.offset, metaLength: h.metaLength, bodyLength: h.bodyLength };
}

export function isDictionary(h: MessageHeader): boolean {
  return h.type === MESSAGE_DICTIONARY;
}
