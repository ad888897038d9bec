// Parquet shards through parquet-wasm: `open` reads the footer only (once: our own Thrift reader
// places the column chunks from the same bytes); a page decodes only the rows and the columns it
// shows (`read({rowGroups, offset, limit, columns})`, which reads only those rows' pages when the
// writer wrote a page index); a whole-file scan decodes by row group. Before the decoder sees a
// column chunk, the headers of the pages it will decode are read and their declared sizes compared
// with the memory cap. Decoded rows are cached within a byte budget.
//
// What the decoder cannot read (a codec, an encoding, encryption) is decided from the footer by our
// own reading of it (columnar/parquetFeatures.ts) before the decoder sees the bytes, and becomes
// `read-unsupported`; whatever the decoder refuses after that is damage (a ReadFailure or a
// DecoderTrap from guardWasm), whatever its words.

import { tableFromIPC, type RecordBatch, type Schema } from 'apache-arrow';
import type { Finding } from '../findings.js';
import type { ByteReader, Entry, GroupInfo, RecordSource, ScanOptions, SourceInfo } from './source.js';
import { errorText, readFinding } from './columnarRules.js';
import { blobOf, keepRange, openFileReader, type ReaderFactory } from './columnar/byteReader.js';
import { chunkPlaces, pageLocations, readPageHeader, PAGE_TYPE_NAMES, type ChunkPlace, type PageHeaderFacts, type PageLocation } from './columnar/parquetPages.js';
import { ByteBudgetCache, batchEntries, groupOf, lostEntries } from './columnar/rows.js';
import { schemaColumns } from './columnar/toJson.js';
import { guardWasm } from './columnar/wasmGuard.js';
import { chunkRefusal, footerFeatures, footerRefusal, isEncrypted, type FooterFeatures } from './columnar/parquetFeatures.js';
import { UnsupportedFeature } from '../errors.js';
import { EMPTY_FILE_MESSAGE } from './jsonl.js';

export { wasmFaults } from './columnar/wasmGuard.js';

type ParquetWasm = typeof import('parquet-wasm/node');
type ParquetFile = import('parquet-wasm/node').ParquetFile;

let wasm: ParquetWasm | null = null;

/** Loads parquet-wasm once; its node build reads parquet_wasm_bg.wasm from beside itself (or the bundle). */
async function loadWasm(): Promise<ParquetWasm> {
  if (!wasm) wasm = (await import('parquet-wasm/node')) as ParquetWasm;
  return wasm;
}

/** Size of parquet-wasm's linear memory in bytes (it never shrinks); 0 before the module loads. */
export function wasmMemoryBytes(): number {
  return wasm ? wasm.wasmMemory().buffer.byteLength : 0;
}

export interface ParquetSourceOptions {
  /** Opens the file for range reads; tests pass a counting reader. */
  openReader?: ReaderFactory;
  /** Bytes of decoded row groups kept for paging back and forth. */
  cacheBytes?: number;
  /**
   * The memory cap: a row group whose requested columns decode to more than this, or a page whose
   * header declares more, is refused, not decoded: wasm memory is capped at 4 GiB and never shrinks.
   */
  maxDecodedBytes?: number;
}

/** Codec names by parquet-wasm's `Compression` enum (which numbers them apart from parquet-format's Thrift enum). */
const CODEC_NAMES = ['uncompressed', 'snappy', 'gzip', 'brotli', 'lz4 (hadoop framing)', 'zstd', 'lz4 raw', 'lzo'];

const MAGIC = [0x50, 0x41, 0x52]; // "PAR"

/** What one row group may decode to unless the caller says otherwise: wasm memory is capped at 4 GiB. */
export const DEFAULT_MAX_DECODED_BYTES = 1024 * 1024 * 1024;

/**
 * Rows a footer may claim per byte of file. A row costs at least a bit of a definition level or of
 * a value on some page, and writers cap a page at 20,000 rows (parquet-mr's and arrow-rs's default
 * page row limit, from memory) behind a page header of a dozen bytes or more; 1,024 rows a byte is
 * far above what any writer produces, yet keeps a forged count from building billions of entries.
 */
export const MAX_ROWS_PER_FILE_BYTE = 1024;
/** Rows one row group may hold at most, whatever the file size: Arrow arrays index rows with 32-bit offsets. */
export const MAX_ROWS_PER_GROUP = 2 ** 31 - 1;

/** Rows a scan turns into entries at a time, so a large row group never becomes millions of objects at once. */
const SCAN_SLICE_ROWS = 4096;

const ENCRYPTED_FOOTER = 'encrypted Parquet (PARE): the footer is encrypted (Parquet modular encryption); Shardwise does not decrypt files';
const ENCRYPTED_COLUMNS = 'encrypted Parquet (plaintext footer): the columns are encrypted (Parquet modular encryption); Shardwise does not decrypt files';

interface Decoded {
  batches: RecordBatch[];
  /** Row (in group) each batch starts at. */
  starts: number[];
}

/** A page whose header declares more than the memory cap; its rows are refused, not decoded. */
class PageLimitError extends Error {}

/** Rows whose requested columns decode to more than the budget for one row group: refused, not decoded. */
class OverBudgetError extends Error {}

export class ParquetSource implements RecordSource {
  readonly format = 'parquet' as const;
  private reader: ByteReader | null = null;
  private file: ParquetFile | null = null;
  private current: SourceInfo;
  private groups: GroupInfo[] = [];
  private firstRows: number[] = [];
  private fieldNames: string[] = [];
  private cache: ByteBudgetCache<Decoded | Error>;
  /** Bytes each group decodes to, per column (top-level name), from the footer. */
  private groupColumnBytes: Map<string, number>[] = [];
  /** Row groups refused at open (their footer-declared size is over the limit): their rows stay empty. */
  private refusedGroups = new Set<number>();
  /** Column chunk places per row group from our own reading of the footer; null when it does not decode. */
  private places: ChunkPlace[][] | null = null;
  /** Offset indexes (page locations) read so far, by the index's byte offset. */
  private offsetIndexes = new Map<number, PageLocation[] | null>();
  /** Page headers read so far, by their byte offset. */
  private headers = new Map<number, PageHeaderFacts | null>();
  /** Codecs, encodings and encryption each column chunk declares, from our own reading of the footer; null when it does not decode. */
  private features: FooterFeatures | null = null;
  /** Set when the schema does not convert to Arrow types: no row can be decoded then. */
  private schemaRefusal: UnsupportedFeature | null = null;

  constructor(
    readonly path: string,
    private readonly opts: ParquetSourceOptions = {},
  ) {
    this.cache = new ByteBudgetCache(opts.cacheBytes ?? 128 * 1024 * 1024);
    this.current = { format: 'parquet', path, sizeBytes: 0, entries: 0, complete: false, findings: [] };
  }

  async open(_signal?: AbortSignal): Promise<SourceInfo> {
    if (this.reader) return this.info();
    this.reader = await (this.opts.openReader ?? openFileReader)(this.path);
    const size = this.reader.size;
    const findings: Finding[] = [];
    const facts: Record<string, string> = { format: 'Parquet' };
    this.current = { format: 'parquet', path: this.path, sizeBytes: size, entries: 0, complete: true, columns: [], groups: [], facts, findings };
    const problem = await this.checkEnds(size);
    if (problem) {
      findings.push(problem);
      return this.info();
    }
    await this.readFooter(size);
    const refusal = this.features ? footerRefusal(this.features) : null;
    if (refusal) {
      // The decoder would refuse the whole footer for it; said as what it is, and the decoder is not asked.
      findings.push(readFinding('read-unsupported', refusal.message));
      return this.info();
    }
    let pw: ParquetWasm;
    try {
      pw = await loadWasm();
    } catch (e) {
      // Not the file's fault: the install is broken, so say so instead of blaming the shard.
      throw new Error(`${this.path}: the Parquet reader (parquet-wasm) did not load: ${errorText(e)}`);
    }
    let file: ParquetFile;
    try {
      file = await guardWasm(() => pw.ParquetFile.fromFile(blobOf(this.reader!) as unknown as Blob));
    } catch (e) {
      // Encryption is what our own reading of the footer says, not what the decoder's message mentions.
      if (this.features && isEncrypted(this.features)) findings.push(readFinding('read-unsupported', ENCRYPTED_COLUMNS));
      else findings.push(readFinding('read-footer-invalid', `the footer does not decode: ${errorText(e)}`));
      return this.info();
    }
    this.file = file;
    try {
      this.describe(file, facts);
    } catch (e) {
      this.groups = [];
      this.firstRows = [];
      this.groupColumnBytes = [];
      this.current.entries = 0;
      this.current.groups = [];
      findings.push(readFinding('read-footer-invalid', e instanceof FooterLimitError ? e.message : `the footer's metadata does not decode: ${errorText(e)}`));
      this.file = null;
      try {
        file.free();
      } catch {
        // Already released.
      }
      return this.info();
    }
    try {
      const schema: Schema = tableFromIPC(file.schema().intoIPCStream()).schema;
      this.fieldNames = schema.fields.map((f) => f.name);
      this.current.columns = schemaColumns(schema);
    } catch (e) {
      this.schemaRefusal = new UnsupportedFeature(`the schema does not convert to Arrow types: ${errorText(e)}`, 'schema');
      findings.push(readFinding('read-unsupported', this.schemaRefusal.message));
    }
    return this.info();
  }

  /**
   * Reads the footer once: our Thrift reader places the column chunks from it and lists what each
   * declares (codec, encodings, encryption), and the decoder's own read of the same range is
   * answered from these bytes. Encrypted files with a plaintext footer carry `encryption_algorithm`
   * (FileMetaData field 8; parquet-format, Encryption.md).
   */
  private async readFooter(size: number): Promise<void> {
    const tail = await this.reader!.read(size - 8, 8);
    const len = new DataView(tail.buffer, tail.byteOffset, 4).getUint32(0, true);
    const footer = await this.reader!.read(size - 8 - len, len);
    const kept = new Uint8Array(len + 8);
    kept.set(footer, 0);
    kept.set(tail, len);
    this.reader = keepRange(this.reader!, size - 8 - len, kept);
    try {
      this.places = chunkPlaces(footer);
    } catch {
      // The decoder reads the footer too and names what is wrong with it.
      this.places = null;
    }
    try {
      this.features = footerFeatures(footer);
    } catch {
      // Nothing is known to be unreadable; the decoder names what is wrong with the footer.
      this.features = null;
    }
  }

  /** Magic at both ends; an encrypted footer ("PARE") is named, not decoded. */
  private async checkEnds(size: number): Promise<Finding | null> {
    if (size === 0) return readFinding('read-empty', EMPTY_FILE_MESSAGE);
    if (size < 12) return readFinding('read-footer-invalid', `the file is ${size} bytes: too short for Parquet (magic, footer, magic)`);
    const head = await this.reader!.read(0, 4);
    const tail = await this.reader!.read(size - 8, 8);
    const isMagic = (b: Uint8Array, last: number) => MAGIC.every((m, k) => b[k] === m) && b[3] === last;
    if (isMagic(tail.subarray(4), 0x45) || isMagic(head, 0x45)) return readFinding('read-unsupported', ENCRYPTED_FOOTER);
    if (!isMagic(head, 0x31)) return readFinding('read-footer-invalid', 'the file does not start with the Parquet magic "PAR1"');
    if (!isMagic(tail.subarray(4), 0x31)) return readFinding('read-truncated', 'the file does not end with the Parquet magic "PAR1": the footer is missing or cut short');
    const footerLen = new DataView(tail.buffer, tail.byteOffset, 4).getUint32(0, true);
    if (footerLen === 0 || footerLen > size - 12) return readFinding('read-footer-invalid', `the footer declares ${footerLen} bytes in a ${size}-byte file`);
    // Checked before it is read: a forged length in a large file must not bring gigabytes into memory.
    const budget = this.opts.maxDecodedBytes ?? DEFAULT_MAX_DECODED_BYTES;
    if (footerLen > budget) return readFinding('read-limit', `the footer declares ${formatSize(footerLen)}, over the ${formatSize(budget)} memory cap of one reader; it is not read`);
    return null;
  }

  private describe(file: ParquetFile, facts: Record<string, string>): void {
    const md = file.metadata();
    const fmd = md.fileMetadata();
    const createdBy = fmd.createdBy();
    if (createdBy) facts['created by'] = createdBy;
    facts['format version'] = String(fmd.version());
    facts['row groups'] = String(md.numRowGroups());
    const codecs = new Set<string>();
    let first = 0;
    this.groups = [];
    this.firstRows = [];
    this.groupColumnBytes = [];
    for (let k = 0; k < md.numRowGroups(); k++) {
      const rg = md.rowGroup(k);
      const rows = Number(rg.numRows());
      const perColumn: Record<string, string> = {};
      const bytes = new Map<string, number>();
      let compressed = 0;
      let uncompressed = 0;
      for (const c of rg.columns()) {
        const path = c.columnPath().join('.');
        const codec = CODEC_NAMES[c.compression()] ?? `codec ${c.compression()}`;
        perColumn[path] = codec;
        codecs.add(codec);
        compressed += c.compressedSize();
        uncompressed += c.uncompressedSize();
        const top = c.columnPath()[0] ?? path;
        bytes.set(top, (bytes.get(top) ?? 0) + c.uncompressedSize());
      }
      this.groups.push({ index: k, rows, firstRow: first, compressedBytes: compressed, uncompressedBytes: uncompressed, codecs: perColumn });
      this.firstRows.push(first);
      this.groupColumnBytes.push(bytes);
      first += rows;
    }
    facts.compression = [...codecs].join(', ') || 'none';
    const size = this.reader?.size ?? 0;
    const rowLimit = Math.min(MAX_ROWS_PER_GROUP, Math.max(1024, size * MAX_ROWS_PER_FILE_BYTE));
    const forged = this.groups.find((g) => !Number.isSafeInteger(g.rows) || g.rows < 0 || g.rows > rowLimit);
    if (forged) {
      // Refused before any entry exists: a forged count must not become one entry per claimed row.
      throw new FooterLimitError(
        `row group ${forged.index} claims ${forged.rows} rows, more than a ${size}-byte file can hold (at most ${rowLimit}); the footer is corrupt, no rows are read`,
      );
    }
    const budget = this.opts.maxDecodedBytes ?? DEFAULT_MAX_DECODED_BYTES;
    for (const g of this.groups) {
      if ((g.uncompressedBytes ?? 0) > budget) {
        this.refusedGroups.add(g.index);
        this.current.findings.push(
          readFinding(
            'read-unsupported',
            `row group ${g.index} decodes to ${formatSize(g.uncompressedBytes ?? 0)} by its footer, over the ${formatSize(budget)} limit for one row group; its ${g.rows} rows are not read`,
            { group: g.index, entry: g.firstRow, record: g.firstRow, rowInGroup: 0 },
          ),
        );
      }
    }
    const total = Number(fmd.numRows());
    if (total !== first) {
      this.current.findings.push(readFinding('read-corrupt', `the footer counts ${total} rows but its row groups hold ${first}`, {}, 'warning'));
    }
    this.current.entries = first;
    this.current.groups = this.groups;
  }

  async index(opts: ScanOptions = {}): Promise<SourceInfo> {
    if (!this.reader) await this.open(opts.signal);
    opts.onProgress?.({ done: this.current.entries, total: this.current.entries, entries: this.current.entries });
    return this.info();
  }

  info(): SourceInfo {
    return { ...this.current, findings: [...this.current.findings] };
  }

  async read(start: number, end: number, opts: { columns?: string[]; signal?: AbortSignal } = {}): Promise<Entry[]> {
    return this.readRows(start, end, opts, false);
  }

  /** Rows [start, end); `whole` decodes each row group at once (the scan), else only the rows asked for. */
  private async readRows(start: number, end: number, opts: { columns?: string[]; signal?: AbortSignal }, whole: boolean): Promise<Entry[]> {
    if (!this.reader) await this.open(opts.signal);
    const s = Math.max(0, start);
    const e = Math.min(end, this.current.entries);
    const out: Entry[] = [];
    if (s >= e || !this.file) return out;
    const columns = opts.columns?.filter((c) => this.fieldNames.includes(c));
    for (let k = groupOf(this.firstRows, s); k < this.groups.length && this.firstRows[k] < e; k++) {
      opts.signal?.throwIfAborted();
      const g = this.groups[k];
      const from = Math.max(0, s - g.firstRow);
      const to = Math.min(g.rows, e - g.firstRow);
      if (to <= from) continue;
      const decoded = whole ? await this.decodeRows(k, 0, g.rows, columns) : ((await this.cachedWhole(k, columns)) ?? (await this.decodeRows(k, from, to, columns)));
      if (decoded instanceof RefusedGroupError) {
        // Reported once at open; the rows are still places, without values.
        out.push(...lostEntries(k, g.firstRow, from, to, 'read-unsupported', '').map((x) => ({ ...x, findings: [] })));
        continue;
      }
      if (decoded instanceof PageLimitError) {
        out.push(...lostEntriesAt(k, g.firstRow, from, to, 'read-limit', decoded.message));
        continue;
      }
      if (decoded instanceof Error) {
        // Refused from what the file declares, or damage the decoder met: told apart by class.
        const rule = decoded instanceof UnsupportedFeature || decoded instanceof OverBudgetError ? 'read-unsupported' : 'read-corrupt';
        const why = decoded instanceof UnsupportedFeature ? decoded.message : errorText(decoded);
        out.push(...lostEntries(k, g.firstRow, from, to, rule, `row group ${k} does not decode: ${why}`));
        continue;
      }
      for (let b = 0; b < decoded.batches.length; b++) {
        const bStart = decoded.starts[b];
        const batch = decoded.batches[b];
        const lo = Math.max(from, bStart);
        const hi = Math.min(to, bStart + batch.numRows);
        if (lo >= hi) continue;
        const rows = batchEntries(batch, k, g.firstRow + bStart, lo - bStart, hi - bStart, undefined);
        // batchEntries counts rows inside the batch; the view wants them inside the row group.
        for (const r of rows) {
          r.rowInGroup = r.entry - g.firstRow;
          for (const f of r.findings) f.rowInGroup = r.rowInGroup;
        }
        out.push(...rows);
      }
    }
    return out;
  }

  private cacheKey(k: number, from: number, to: number, columns: string[] | undefined): string {
    return `${k}|${from}-${to}|${columns ? columns.join('\u0000') : '*'}`;
  }

  /** A whole row group already decoded (by a scan) with these columns, if the cache still holds it. */
  private async cachedWhole(k: number, columns: string[] | undefined): Promise<Decoded | Error | null> {
    const key = this.cacheKey(k, 0, this.groups[k].rows, columns);
    const hit = this.cache.get(hashKey(key));
    return hit && (hit as Decoded & { key?: string }).key === key ? hit : null;
  }

  /** Decodes rows [from, to) of one row group (rows counted in the group), refusing what would blow the memory cap. */
  private async decodeRows(k: number, from: number, to: number, columns: string[] | undefined): Promise<Decoded | Error> {
    const key = this.cacheKey(k, from, to, columns);
    const cacheKey = hashKey(key);
    const hit = this.cache.get(cacheKey);
    if (hit && (hit as Decoded & { key?: string }).key === key) return hit;
    const g = this.groups[k];
    const groupNeeds = columns
      ? columns.reduce((a, c) => a + (this.groupColumnBytes[k].get(c) ?? 0), 0)
      : [...this.groupColumnBytes[k].values()].reduce((a, b) => a + b, 0);
    const whole = from === 0 && to === g.rows;
    const needs = whole ? groupNeeds : Math.ceil((groupNeeds * (to - from)) / Math.max(1, g.rows));
    const budget = this.opts.maxDecodedBytes ?? DEFAULT_MAX_DECODED_BYTES;
    let result: Decoded | Error;
    if (this.refusedGroups.has(k)) {
      result = new RefusedGroupError(`its footer-declared size is over the ${formatSize(budget)} limit for one row group`);
    } else if (whole && needs > budget) {
      result = new OverBudgetError(`its columns decode to ${needs} bytes, beyond the ${budget}-byte budget for one row group`);
    } else {
      try {
        // What the decoder cannot read is known from the footer: it is not handed these bytes.
        const unreadable = this.schemaRefusal ?? (this.features ? chunkRefusal(this.features, k, columns) : null);
        if (unreadable) throw unreadable;
        const refused = await this.checkPages(k, from, to, columns, budget);
        if (refused) throw new PageLimitError(refused);
        const table = await guardWasm(() =>
          this.file!.read({ rowGroups: [k], ...(whole ? {} : { offset: from, limit: to - from }), ...(columns ? { columns } : {}) }),
        );
        const arrow = tableFromIPC(table.intoIPCStream());
        const starts: number[] = [];
        let at = from;
        for (const b of arrow.batches) {
          starts.push(at);
          at += b.numRows;
        }
        if (at !== to) throw new Error(`it holds ${at - from} rows where the footer says ${to - from}`);
        result = Object.assign({ batches: arrow.batches, starts }, { key });
      } catch (e) {
        result = e instanceof Error ? e : new Error(String(e));
      }
    }
    this.cache.set(cacheKey, result, Math.max(needs, 1024));
    return result;
  }

  /**
   * Reads the headers of the pages that decoding rows [from, to) of row group k touches (only those
   * rows' pages when the chunk has an offset index, else every page of the chunk) and returns why
   * they are refused when one declares more than the cap, or all of them together do; null when
   * they fit. A header that does not decode is left to the decoder, which names the damage.
   */
  private async checkPages(k: number, from: number, to: number, columns: string[] | undefined, cap: number): Promise<string | null> {
    const chunks = this.places?.[k];
    if (!chunks) return null;
    let total = 0;
    for (const chunk of chunks) {
      if (columns && !columns.includes(chunk.top)) continue;
      const end = chunk.start + chunk.length;
      const offsets: number[] = [];
      const locations = chunk.offsetIndex && !(from === 0 && to === this.groups[k].rows) ? await this.offsetIndex(chunk) : null;
      if (locations && locations.length) {
        if (chunk.start < locations[0].offset) offsets.push(chunk.start); // the dictionary page
        for (let p = 0; p < locations.length; p++) {
          const next = p + 1 < locations.length ? locations[p + 1].firstRow : Infinity;
          if (locations[p].firstRow < to && next > from) offsets.push(locations[p].offset);
        }
        for (const at of offsets) {
          const h = await this.header(at, end);
          // A header that does not decode is left to the decoder; the other pages are still checked.
          if (!h) continue;
          const why = overCap(h, at, chunk, k, cap);
          if (why) return why;
          total += h.uncompressedSize;
        }
      } else {
        let at = chunk.start;
        for (let pages = 0; at < end && pages < 1_000_000; pages++) {
          const h = await this.header(at, end);
          // Past a header that does not decode, this chunk's pages cannot be found; the next chunk's can.
          if (!h || h.compressedSize < 0 || h.uncompressedSize < 0) break;
          const why = overCap(h, at, chunk, k, cap);
          if (why) return why;
          total += h.uncompressedSize;
          at += h.headerBytes + h.compressedSize;
        }
      }
      if (total > cap) {
        return `row group ${k}: the pages these rows need declare ${formatSize(total)} uncompressed together, over the ${formatSize(cap)} memory cap; the rows are not read`;
      }
    }
    return null;
  }

  private async header(at: number, end: number): Promise<PageHeaderFacts | null> {
    if (this.headers.has(at)) return this.headers.get(at)!;
    if (this.headers.size > 100_000) this.headers.clear();
    const h = at >= 0 && at < end ? await readPageHeader(this.reader!, at, end - at) : null;
    this.headers.set(at, h);
    return h;
  }

  private async offsetIndex(chunk: ChunkPlace): Promise<PageLocation[] | null> {
    const { offset, length } = chunk.offsetIndex!;
    if (this.offsetIndexes.has(offset)) return this.offsetIndexes.get(offset)!;
    let locations: PageLocation[] | null = null;
    if (offset + length <= this.current.sizeBytes && length <= 64 * 1024 * 1024) {
      try {
        locations = pageLocations(await this.reader!.read(offset, length));
      } catch {
        locations = null;
      }
    }
    this.offsetIndexes.set(offset, locations);
    return locations;
  }

  async *scan(opts: ScanOptions = {}): AsyncIterable<Entry> {
    if (!this.reader) await this.open(opts.signal);
    const total = this.current.entries;
    const from = opts.from ?? 0;
    const to = Math.min(opts.to ?? total, total);
    if (from >= to) return;
    for (let k = groupOf(this.firstRows, from); k < this.groups.length && this.firstRows[k] < to; k++) {
      opts.signal?.throwIfAborted();
      const g = this.groups[k];
      const end = Math.min(to, g.firstRow + g.rows);
      if ((await this.decodeRows(k, 0, g.rows, undefined)) instanceof Error) {
        // One finding for a row group that does not decode; its claimed rows are not walked one by one.
        if (from <= g.firstRow) for (const e of await this.readRows(g.firstRow, Math.min(end, g.firstRow + 1), { signal: opts.signal }, true)) yield e;
        opts.onProgress?.({ done: end - from, total: to - from, entries: total });
        continue;
      }
      for (let lo = Math.max(from, g.firstRow); lo < end; lo += SCAN_SLICE_ROWS) {
        opts.signal?.throwIfAborted();
        const entries = await this.readRows(lo, Math.min(end, lo + SCAN_SLICE_ROWS), { signal: opts.signal }, true);
        for (const e of entries) yield e;
      }
      opts.onProgress?.({ done: Math.min(to, g.firstRow + g.rows) - from, total: to - from, entries: total });
    }
  }

  async close(): Promise<void> {
    this.cache.clear();
    try {
      this.file?.free();
    } catch {
      // Already freed by the module: nothing left to release.
    }
    this.file = null;
    const r = this.reader;
    this.reader = null;
    await r?.close();
  }
}

/** A footer whose counts no file of its size can hold. */
class FooterLimitError extends Error {}

/** A row group refused at open; its finding was raised then. */
class RefusedGroupError extends Error {}

/** Why a page is refused when its header declares more than the cap; null when it fits. */
function overCap(h: PageHeaderFacts, at: number, chunk: ChunkPlace, k: number, cap: number): string | null {
  const declared = Math.max(h.uncompressedSize, h.compressedSize);
  if (declared <= cap) return null;
  const kind = PAGE_TYPE_NAMES[h.type] ?? 'page';
  return `column "${chunk.path}", row group ${k}: the ${kind} at byte ${at} declares ${formatSize(declared)} (${h.values} values), over the ${formatSize(cap)} memory cap; its rows are not read`;
}

/** Rows refused by a page check: one finding on the first row asked for, as the view and a scan both show it. */
function lostEntriesAt(group: number, firstRow: number, from: number, to: number, rule: string, message: string): Entry[] {
  const out = lostEntries(group, firstRow, from, to, rule, '').map((x) => ({ ...x, findings: [] as Finding[] }));
  if (out.length) out[0].findings.push(readFinding(rule, message, { record: firstRow + from, entry: firstRow + from, group, rowInGroup: from }));
  return out;
}

function formatSize(n: number): string {
  if (n >= 1024 ** 3) return `${(n / 1024 ** 3).toFixed(1)} GiB`;
  if (n >= 1024 ** 2) return `${(n / 1024 ** 2).toFixed(1)} MiB`;
  if (n >= 1024 && n % 1024 === 0) return `${n / 1024} KiB`;
  return `${n} bytes`;
}

/** Cache keys are numbers; collisions are caught by comparing the stored key string. */
function hashKey(s: string): number {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return h >>> 0;
}
