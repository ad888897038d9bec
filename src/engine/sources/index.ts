// Dispatch on format once, at the edge: a file's bytes pick its source here and nowhere else; its
// name is only a hint (see sniff.ts).

import type { FormatName, RecordSource } from './source.js';
import { JsonlSource, compressionOf, type Compression } from './jsonl.js';
import { sniff } from './sniff.js';
import { ParquetSource } from './parquet.js';
import { ArrowFileSource } from './arrowFile.js';
import { ArrowStreamSource } from './arrowStream.js';
import type { FormatTraits } from './traits.js';
import { JsonArraySource } from './jsonArray.js';

export interface OpenOptions {
  /** Lines longer than this are findings and are not parsed. */
  maxLineBytes?: number;
  /**
   * A read in a worker that makes no progress (no record, no byte) for this many seconds is
   * stopped, with a `read-stalled` finding (default DEFAULT_STALL_SECONDS; 0 turns the watchdog off).
   */
  stallSeconds?: number;
  /** The memory cap per reader: a page, row group or batch declaring more is refused with a finding. */
  maxReaderBytes?: number;
}

/** How long a read may make no progress before its worker is stopped. */
export const DEFAULT_STALL_SECONDS = 10;

export interface FormatEntry {
  readonly format: FormatName;
  /** What people call it, for messages. */
  readonly title: string;
  /** Lower-case file-name endings the format usually has (the editor claims these; the bytes decide). */
  readonly endings: readonly string[];
  /** What the code outside sources/ asks instead of the format's name. */
  readonly traits: FormatTraits;
  create(path: string, opts: OpenOptions, compression: Compression): RecordSource;
}

/** The one list of formats and their usual endings; package.json's editor selectors and menu follow it (a unit test checks). */
export const FORMATS: readonly FormatEntry[] = [
  {
    format: 'jsonl',
    title: 'JSON Lines',
    traits: { textual: true, oneLinePerEntry: true, entries: 'lines', group: null, wasmMemory: false },
    endings: ['.jsonl', '.ndjson', '.jsonl.gz', '.ndjson.gz', '.jsonl.zst', '.ndjson.zst'],
    create: (p, o, compression) => new JsonlSource(p, { ...o, compression }),
  },
  {
    format: 'json-array',
    title: 'a JSON array',
    traits: { textual: true, oneLinePerEntry: false, entries: 'lines', group: null, wasmMemory: false },
    endings: ['.json', '.json.gz', '.json.zst'],
    create: (p, o, compression) => new JsonArraySource(p, { maxElementBytes: o.maxLineBytes, compression }),
  },
  {
    format: 'parquet',
    title: 'Parquet',
    endings: ['.parquet'],
    traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'row group', many: 'row groups' }, wasmMemory: true },
    create: (p, o) => new ParquetSource(p, { maxDecodedBytes: o.maxReaderBytes }),
  },
  {
    format: 'arrow-file',
    title: 'an Arrow IPC file',
    endings: ['.arrow', '.feather'],
    traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
    create: (p, o) => new ArrowFileSource(p, { maxBatchBytes: o.maxReaderBytes }),
  },
  {
    format: 'arrow-stream',
    title: 'an Arrow IPC stream',
    endings: ['.arrows', '.stream'],
    traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
    create: (p, o) => new ArrowStreamSource(p, { maxBatchBytes: o.maxReaderBytes }),
  },
];

const BY_FORMAT = new Map(FORMATS.map((f) => [f.format, f]));

/** The traits of a format (each format's line of the table declares them). */
export function traitsOf(format: FormatName): FormatTraits {
  const f = BY_FORMAT.get(format);
  if (!f) throw new Error(`unknown format "${format}"`);
  return f.traits;
}

export const KNOWN_FORMATS: readonly FormatName[] = FORMATS.map((f) => f.format);

/** The format a file's name suggests (the longest matching ending), or null. Only a hint: see `sniffFormat`. */
export function formatOf(path: string): FormatName | null {
  const lower = path.toLowerCase();
  let best: FormatEntry | null = null;
  let bestLen = 0;
  for (const f of FORMATS) {
    for (const e of f.endings) {
      if (lower.endsWith(e) && e.length > bestLen) {
        best = f;
        bestLen = e.length;
      }
    }
  }
  return best?.format ?? null;
}

export function supportedEndings(): string[] {
  return FORMATS.flatMap((f) => f.endings);
}

/**
 * The reader a file needs, from its first and last bytes: an Arrow stream named `.arrow`, JSON Lines
 * named `.json`, a shard with no ending at all. The name decides only what the bytes leave open.
 * Throws `UnsupportedFileError` for bytes none of the formats fits.
 */
export function sniffFormat(path: string): { format: FormatName; compression: Compression } {
  const byName = formatOf(path);
  const s = sniff(path, byName ? { format: byName, compression: compressionOf(path) } : null);
  if (s.format === null) throw new UnsupportedFileError(path, s.what);
  return { format: s.format, compression: s.compression };
}

export function createSource(path: string, opts: OpenOptions = {}): RecordSource {
  const { format, compression } = sniffFormat(path);
  const entry = FORMATS.find((f) => f.format === format)!;
  return entry.create(path, opts, compression);
}

export class UnsupportedFileError extends Error {
  constructor(
    readonly path: string,
    /** What the bytes were found to be, e.g. `it starts with bytes 89 50 4e 47 … (a PNG image?)`. */
    readonly found: string,
  ) {
    const titles = FORMATS.map((f) => f.title);
    super(`${path}: not a shard Shardwise reads: neither ${titles.slice(0, -1).join(', ')} nor ${titles[titles.length - 1]}; ${found}`);
    this.name = 'UnsupportedFileError';
  }
}
