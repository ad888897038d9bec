// Dispatch on format once, at the edge: a file name picks its source here and nowhere else.

import type { FormatName, RecordSource } from './source.js';
import { JsonlSource, compressionOf } from './jsonl.js';
import { sniff } from './sniff.js';
import { ParquetSource } from './parquet.js';
import { ArrowFileSource } from './arrowFile.js';
import { ArrowStreamSource } from './arrowStream.js';
import { JsonArraySource } from './jsonArray.js';

export interface OpenOptions {
  /** Lines longer than this are findings and are not parsed. */
  maxLineBytes?: number;
}

interface FormatEntry {
  format: FormatName;
  /** Lower-case file-name endings, longest first where they overlap. */
  endings: string[];
  create(path: string, opts: OpenOptions): RecordSource;
}

const FORMATS: FormatEntry[] = [
  {
    format: 'jsonl',
    endings: ['.jsonl', '.ndjson', '.jsonl.gz', '.ndjson.gz', '.jsonl.zst', '.ndjson.zst'],
    create: (p, o) => new JsonlSource(p, o),
  },
  { format: 'parquet', endings: ['.parquet'], create: (p) => new ParquetSource(p) },
  { format: 'arrow-file', endings: ['.arrow', '.feather'], create: (p) => new ArrowFileSource(p) },
  { format: 'arrow-stream', endings: ['.arrows', '.stream'], create: (p) => new ArrowStreamSource(p) },
  { format: 'json-array', endings: ['.json'], create: (p, o) => new JsonArraySource(p, { maxElementBytes: o.maxLineBytes }) },
];

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
 * The reader a file needs: its bytes decide (an Arrow stream named `.arrow`, JSON Lines named
 * `.json`, a shard with no ending at all); the name decides only for an empty file.
 */
export function sniffFormat(path: string): { format: FormatName; compression: 'none' | 'gzip' | 'zstd' } {
  const s = sniff(path);
  if (s.format !== null) return { format: s.format, compression: s.compression };
  const byName = formatOf(path);
  if (s.what === 'an empty file' && byName !== null) return { format: byName, compression: compressionOf(path) };
  throw new UnsupportedFileError(path, s.what);
}

export function createSource(path: string, opts: OpenOptions = {}): RecordSource {
  const { format, compression } = sniffFormat(path);
  if (format === 'jsonl') return new JsonlSource(path, { ...opts, compression });
  const entry = FORMATS.find((f) => f.format === format);
  if (!entry) throw new UnsupportedFileError(path, format);
  return entry.create(path, opts);
}

export class UnsupportedFileError extends Error {
  constructor(
    readonly path: string,
    found?: string,
  ) {
    super(
      `${path}: not a shard Shardwise reads: neither JSON Lines, a JSON array, Parquet nor Arrow` +
        (found ? ` (${found})` : '') +
        ` — the usual endings are ${supportedEndings().join(', ')}`,
    );
  }
}
