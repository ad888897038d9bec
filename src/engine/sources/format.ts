// What one format declares about itself, on one line of FORMATS (formats.ts): its name, its usual
// file endings, the traits the code outside sources/ asks, how its bytes show it, and its reader.
// A new format is one file in formats/ exporting a FormatEntry, plus its line in FORMATS and its
// endings in package.json's editor selectors (a unit test checks those agree).

import type { Compression } from './decompress.js';
import type { FormatName, RecordSource } from './source.js';
import type { FormatTraits } from './traits.js';

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

/** A bounded look at a file for recognising it: its size, its first 64 KiB (or the whole file, when smaller) and its last 8 bytes. */
export interface Probe {
  readonly size: number;
  readonly head: Uint8Array;
  readonly tail: Uint8Array;
  /** The head holds no NUL byte and is valid UTF-8 (its first 4 KiB). */
  readonly looksText: boolean;
  /** The head starts like a well-known file that is not a shard (an image, an archive). */
  readonly knownOther: boolean;
}

/**
 * How a binary format's bytes show it, asked in three rounds over every format in FORMATS' order:
 * `start` before anything else, `damagedStart` before text is considered (framing that text never
 * has), `intactEnd` when no format and no text fits the start (the reader then says what is wrong).
 */
export interface ByteSigns {
  start?(p: Probe): boolean;
  damagedStart?(p: Probe): boolean;
  intactEnd?(p: Probe): boolean;
}

export interface FormatEntry {
  readonly format: FormatName;
  /** What people call it, for messages. */
  readonly title: string;
  /** Lower-case file-name endings the format usually has (the editor claims these; the bytes decide). */
  readonly endings: readonly string[];
  /** What the code outside sources/ asks instead of the format's name. */
  readonly traits: FormatTraits;
  /** A binary format's signs in its bytes. */
  readonly signs?: ByteSigns;
  /**
   * A JSON text format: which shape of text it reads (one value a line, or one array), possibly
   * wrapped in a compression; the text sniffer picks the format by that shape.
   */
  readonly jsonText?: 'lines' | 'array';
  /**
   * A file found in a folder that this format would read but that is no shard (a pretty-printed
   * JSON document read as broken lines): a folder walk leaves it out.
   */
  readonly notAShard?: (path: string, compression: Compression) => boolean;
  create(path: string, opts: OpenOptions, compression: Compression): RecordSource;
}

/** Whether `buf` holds `magic` (bytes, or a string of Latin-1 characters) at `at`. */
export function bytesAt(buf: Uint8Array, magic: readonly number[] | string, at = 0): boolean {
  const m = typeof magic === 'string' ? [...magic].map((c) => c.charCodeAt(0)) : magic;
  if (at < 0 || buf.length < at + m.length) return false;
  for (let k = 0; k < m.length; k++) if (buf[at + k] !== m[k]) return false;
  return true;
}
