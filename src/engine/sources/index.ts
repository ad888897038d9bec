// Dispatch on format once, at the edge: a file's bytes pick its source here and nowhere else; its
// name is only a hint (see sniff.ts). The formats themselves are listed in formats.ts.

import { compressionOf, type Compression } from './decompress.js';
import type { FormatEntry, OpenOptions } from './format.js';
import { FORMATS } from './formats.js';
import { sniff } from './sniff.js';
import type { FormatName, RecordSource } from './source.js';
import type { FormatTraits } from './traits.js';

export { FORMATS } from './formats.js';
export type { FormatEntry, OpenOptions } from './format.js';

/** How long a read may make no progress before its worker is stopped. */
export const DEFAULT_STALL_SECONDS = 10;

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
  return BY_FORMAT.get(format)!.create(path, opts, compression);
}

/**
 * Whether a file found in a folder is a shard: one of the formats reads its bytes, and the format
 * does not take it for a document of another kind (a pretty-printed JSON settings file). False
 * for a file that cannot be read.
 */
export function isShardFile(path: string): boolean {
  try {
    const { format, compression } = sniffFormat(path);
    return !BY_FORMAT.get(format)!.notAShard?.(path, compression);
  } catch {
    return false;
  }
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
