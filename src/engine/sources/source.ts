// The one record-source interface: every format (JSONL, JSON array, Parquet, Arrow file/stream)
// lives behind it, so checks, the record view, the panel and the CLI never know the format.

import type { Finding } from '../findings.js';

/** A format's name, as its line of FORMATS (formats.ts) gives it: `jsonl`, `parquet`, … An open set. */
export type FormatName = string;

/**
 * One place in the source, in file order: a line of a JSONL file, an element of a JSON array,
 * a row of a columnar file. An entry may hold a record (`value` set) or only findings
 * (a blank or unparseable line).
 */
export interface Entry {
  /** 0-based position among the source's entries: what the record view pages by. */
  entry: number;
  /** 0-based record index among the file's records; null when the entry holds no record. */
  record: number | null;
  /** 1-based line of the entry's start (text formats); null for columnar rows. */
  line: number | null;
  /** 1-based column of the entry's start (text formats; 1 for JSONL). */
  column: number | null;
  /** Byte offset of the entry's start in the (decompressed) file (text formats). */
  byteOffset?: number;
  /** Row group (Parquet) or record batch (Arrow) holding the row, and the row inside it. */
  group?: number;
  rowInGroup?: number;
  /** The decoded source text of the entry (text formats), used to place findings at a column. */
  text?: string;
  /** The record as a plain JSON value; undefined when the entry holds no record. */
  value?: unknown;
  /** Findings the source itself raised (read, encoding, json families), already located. */
  findings: Finding[];
  /** The entry is empty or white space only (a blank JSON Lines line): it holds no record and is no syntax error. */
  blank?: true;
  /**
   * The file's final line, without its `\n` and not (yet) a JSON value, while the file is growing
   * (a job still writing it): shown as incomplete, its syntax finding held back until it settles.
   */
  incomplete?: true;
}

export interface ColumnInfo {
  name: string;
  /** Human-readable type, e.g. `string`, `list<struct<role: string, content: string>>`. */
  type: string;
}

export interface GroupInfo {
  /** Row group or batch index. */
  index: number;
  rows: number;
  /** First whole-file row index of the group. */
  firstRow: number;
  compressedBytes?: number;
  uncompressedBytes?: number;
  /** Codec per column, where the format records one. */
  codecs?: Record<string, string>;
}

/** What opening a source tells before any record is read. */
export interface SourceInfo {
  format: FormatName;
  path: string;
  sizeBytes: number;
  /** Entries known now (exact for columnar formats after open; grows while a text file is indexed). */
  entries: number;
  /** True once `entries` is final. */
  complete: boolean;
  columns?: ColumnInfo[];
  groups?: GroupInfo[];
  /** Free-form facts for the view's header (codec, compression, writer...). */
  facts?: Record<string, string>;
  /** Findings raised while opening (a truncated footer, a missing end-of-stream marker...). */
  findings: Finding[];
}

export interface Progress {
  /** Bytes (or rows) done and total, for a progress bar. */
  done: number;
  total: number;
  /** Entries known so far. */
  entries: number;
}

/** What `extend` saw of a file that may have changed on disk since it was opened. */
export interface FileChange {
  /**
   * `none`: the same bytes; `grew`: bytes were appended and the new entries are indexed; `shorter`
   * or `replaced` (another file, or other bytes where the indexed ones were): open it again.
   */
  change: 'none' | 'grew' | 'shorter' | 'replaced';
  info: SourceInfo;
}

export interface ScanOptions {
  signal?: AbortSignal;
  onProgress?: (p: Progress) => void;
  /** Start at this entry (0 = from the beginning); end before this entry (undefined = to the end). */
  from?: number;
  to?: number;
  /**
   * Entries this scan must deliver (a worker's share). A source may skip building the others —
   * it still counts them, so record numbers stay right — and callers ignore any it does yield.
   */
  want?: (entry: number) => boolean;
  /**
   * False: entries skipped by `want` are not parsed, so record numbers after them count every
   * skipped entry that may hold a record as one; the caller renumbers (the worker pool does, in
   * entry order, from every share's outcomes). Default true.
   */
  exactRecords?: boolean;
}

export interface RecordSource {
  readonly format: FormatName;
  readonly path: string;
  /** Cheap: reads what it takes to describe the file (a footer, the first chunk). */
  open(signal?: AbortSignal): Promise<SourceInfo>;
  /**
   * Builds whatever random access needs (a line index for text formats; nothing for columnar ones),
   * streaming progress; `info()` reflects the entries found so far while it runs.
   */
  index(opts?: ScanOptions): Promise<SourceInfo>;
  /** The latest description (entries grow while indexing). */
  info(): SourceInfo;
  /** Reads entries [start, end) — only what those entries need. Requires `index` to have reached `end`. */
  read(start: number, end: number, opts?: { columns?: string[]; signal?: AbortSignal }): Promise<Entry[]>;
  /** Streams every entry in order, for whole-file checks; needs no index. */
  scan(opts?: ScanOptions): AsyncIterable<Entry>;
  /**
   * A source whose index numbers records lazily learns from a whole-file pass elsewhere (the
   * analysis): `entries` are the entries below `through` that hold no record.
   */
  learnNonRecords?(entries: Iterable<number>, through: number): void;
  /**
   * Looks at the file on disk again: appended bytes are indexed from where the index ends (a
   * source that cannot extend reports any change as `replaced`). `settled`: the file has stopped
   * growing, so a half-written final line is an ordinary finding again.
   */
  extend?(opts?: { settled?: boolean }): Promise<FileChange>;
  /** A finished index as plain JSON, to keep between sessions (sources with nothing worth keeping lack it). */
  exportIndex?(): unknown;
  /** Takes a kept index of the same bytes instead of indexing; false when it does not fit. */
  importIndex?(kept: unknown): boolean;
  close(): Promise<void>;
}

/** A byte-range reader over a file: lets tests count what a source reads. */
export interface ByteReader {
  readonly size: number;
  read(offset: number, length: number): Promise<Uint8Array>;
  close(): Promise<void>;
}
