// Which reader a file needs, from its first and last bytes; the name is only a hint. Each binary
// format declares its signs (format.ts) and the JSON text formats the shape of text they read; this
// module asks them in FORMATS' order, and decides JSON Lines against one JSON array itself.
// Compression (gzip, zstd) is recognised by decompress.ts from the first bytes. Only a bounded head
// is ever read.

import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { compressionOfBytes, decompressHead, type Compression } from './decompress.js';
import { bytesAt as startsWith, type FormatEntry, type Probe } from './format.js';
import { FORMATS } from './formats.js';
import type { FormatName } from './source.js';

export type Sniffed = { format: FormatName; compression: Compression } | { format: null; what: string };

/** What a file's name suggests: decides only what its bytes leave open. */
export type NameHint = { format: FormatName; compression: Compression } | null;

/** What is read first; text whose first line runs past it is read again up to TEXT_HEAD_MAX. */
const HEAD_BYTES = 64 * 1024;
const TEXT_HEAD_MAX = 1024 * 1024;

/** Hints for the files most often mistaken for shards (magic numbers from each format's specification). */
const KNOWN_OTHERS: { at?: number; bytes: number[] | string; what: string }[] = [
  { bytes: [0x89, 0x50, 0x4e, 0x47], what: 'a PNG image' },
  { bytes: [0xff, 0xd8, 0xff], what: 'a JPEG image' },
  { bytes: 'GIF8', what: 'a GIF image' },
  { bytes: '%PDF', what: 'a PDF document' },
  { bytes: [0x50, 0x4b, 0x03, 0x04], what: 'a ZIP archive' },
  { bytes: 'BZh', what: 'bzip2-compressed data, which is not read' },
  { bytes: [0xfd, 0x37, 0x7a, 0x58, 0x5a, 0x00], what: 'xz-compressed data, which is not read' },
  { bytes: [0x04, 0x22, 0x4d, 0x18], what: 'an LZ4 frame, which is not read' },
  { bytes: 'FEA1', what: 'a Feather v1 file; only Feather v2, the Arrow IPC file, is read' },
  { bytes: 'ORC', what: 'an ORC file' },
  { bytes: [0x4f, 0x62, 0x6a, 0x01], what: 'an Avro container file' },
  { bytes: 'SQLite format 3', what: 'an SQLite database' },
  { bytes: [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59], what: 'a NumPy array' },
  { bytes: [0xff, 0xfe], what: 'UTF-16 text; JSON shards are UTF-8' },
  { bytes: [0xfe, 0xff], what: 'UTF-16 text; JSON shards are UTF-8' },
  { at: 257, bytes: 'ustar', what: 'a tar archive' },
];

function hex(buf: Uint8Array, n = 8): string {
  return [...buf.subarray(0, n)].map((b) => b.toString(16).padStart(2, '0')).join(' ');
}

function guess(buf: Uint8Array): string {
  const known = KNOWN_OTHERS.find((k) => startsWith(buf, k.bytes, k.at));
  return known ? ` (${known.what}?)` : '';
}

/** A bounded look at one file: its size, the first `HEAD_BYTES` (more on request) and the last 8 bytes. */
class Ends {
  readonly size: number;
  head: Buffer;
  readonly tail: Buffer;

  constructor(
    private readonly fd: number,
    path: string,
  ) {
    const st = fstatSync(fd);
    if (!st.isFile()) throw new Error(`${path}: not a file`);
    this.size = st.size;
    this.head = this.read(0, HEAD_BYTES);
    this.tail = this.read(Math.max(0, this.size - 8), 8);
  }

  read(offset: number, length: number): Buffer {
    const buf = Buffer.alloc(Math.max(0, Math.min(length, this.size - offset)));
    let done = 0;
    while (done < buf.length) {
      const n = readSync(this.fd, buf, done, buf.length - done, offset + done);
      if (n === 0) break;
      done += n;
    }
    return buf.subarray(0, done);
  }

  /** The head grown to `length` bytes (or the whole file, if smaller). */
  grow(length: number): Buffer {
    if (this.head.length < length && this.head.length < this.size) this.head = this.read(0, length);
    return this.head;
  }
}

const WS = new Set([0x20, 0x09, 0x0a, 0x0d]);
const VALUE_START = /^[[{"\-0-9tfn]/;

/** Index of the first byte of JSON text after an optional UTF-8 byte order mark and white space; -1 if none. */
function textStart(head: Uint8Array): number {
  let k = startsWith(head, [0xef, 0xbb, 0xbf]) ? 3 : 0;
  while (k < head.length && WS.has(head[k])) k++;
  return k < head.length ? k : -1;
}

/**
 * JSON Lines or one JSON array, from text starting with `[` at `start`: the first line holding a
 * whole JSON value followed by a line starting another is JSON Lines (`[1,2]\n[3,4]`); a
 * pretty-printed array's first line is never whole, and a one-line array has no second value.
 * 'unsure' when the first line runs past a head that is not the whole text.
 */
export function arrayOrLines(head: Uint8Array, start: number, whole: boolean): 'lines' | 'array' | 'unsure' {
  const nl = head.indexOf(0x0a, start);
  if (nl === -1) return whole ? 'array' : 'unsure';
  const decode = (a: number, b?: number) => new TextDecoder('utf-8', { fatal: false }).decode(head.subarray(a, b));
  try {
    JSON.parse(decode(start, nl));
  } catch {
    return 'array';
  }
  let k = nl + 1;
  while (k < head.length && WS.has(head[k])) k++;
  if (k >= head.length) return whole ? 'array' : 'unsure';
  return VALUE_START.test(decode(k, k + 1)) ? 'lines' : 'array';
}

/** True when the first line (after a byte order mark) is one whole JSON value. */
function firstLineIsJson(head: Uint8Array, start: number): boolean {
  const nl = head.indexOf(0x0a, start);
  const end = nl === -1 ? head.length : nl;
  try {
    JSON.parse(new TextDecoder('utf-8', { fatal: true }).decode(head.subarray(start, end)));
    return true;
  } catch {
    return false;
  }
}

/** The JSON text format that reads text of this shape. */
function ofShape(shape: 'lines' | 'array'): FormatEntry {
  const f = FORMATS.find((x) => x.jsonText === shape);
  if (!f) throw new Error(`no format reads JSON text as ${shape}`);
  return f;
}

/** The name's format when it is a JSON text format, else null. */
function textHint(hint: NameHint): FormatEntry | null {
  return FORMATS.find((f) => f.jsonText !== undefined && f.format === hint?.format) ?? null;
}

/** JSON Lines or a JSON array from the start of the (decompressed) text; null when it is not JSON text. */
function textFormat(head: Uint8Array, whole: boolean, hint: NameHint, more: () => { head: Uint8Array; whole: boolean }): FormatEntry | null {
  let start = textStart(head);
  // Only white space (or a byte order mark): the name decides; JSON Lines holds blank lines.
  if (start === -1) return textHint(hint) ?? ofShape('lines');
  if (head[start] === 0x7b) return ofShape('lines');
  if (head[start] === 0x5b) {
    let shape = arrayOrLines(head, start, whole);
    if (shape === 'unsure') {
      const bigger = more();
      start = textStart(bigger.head);
      shape = arrayOrLines(bigger.head, start, bigger.whole);
    }
    // A first line longer than the largest head read is far likelier one array than one line of many.
    return ofShape(shape === 'unsure' ? 'array' : shape);
  }
  // Other JSON values, one a line ("text", 12, null): records or not, the checks say so.
  if (firstLineIsJson(head, start)) return ofShape('lines');
  // A shard whose first line is broken still opens under a text name: the reader reports the line.
  if (textHint(hint) && isText(head.subarray(0, 4096))) return textHint(hint);
  return null;
}

/** No NUL byte and valid UTF-8 (a sequence cut by the end of the sample allowed). */
function isText(sample: Uint8Array): boolean {
  if (sample.includes(0)) return false;
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(sample, { stream: true });
    return true;
  } catch {
    return false;
  }
}

/** A one-line, escaped quote of the start of a text: for messages only. */
function quote(head: Uint8Array): string {
  const text = new TextDecoder('utf-8', { fatal: false }).decode(head.subarray(0, 64)).replace(/^\uFEFF/, '').split(/\r?\n/)[0];
  return JSON.stringify(text.length > 24 ? `${text.slice(0, 24)}…` : text);
}

/**
 * The reader `path` needs, decided by its bytes. `hint`, from the name, decides only what the bytes
 * leave open: an empty file, text of white space only, a text shard whose first line is broken.
 */
export function sniff(path: string, hint: NameHint = null): Sniffed {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    throw new Error(`${path}: cannot open (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  try {
    return sniffOpen(new Ends(fd, path), hint);
  } finally {
    closeSync(fd);
  }
}

function sniffOpen(ends: Ends, hint: NameHint): Sniffed {
  const { head, tail, size } = ends;
  // Nothing to go by: the name decides, and an empty shard without one holds no lines.
  if (size === 0) return hint ?? { format: ofShape('lines').format, compression: 'none' };
  const probe: Probe = { size, head, tail, looksText: isText(head.subarray(0, 4096)), knownOther: guess(head) !== '' };
  const signed = (round: 'start' | 'damagedStart' | 'intactEnd'): Sniffed | null => {
    const f = FORMATS.find((x) => x.signs?.[round]?.(probe));
    return f ? { format: f.format, compression: 'none' } : null;
  };
  const byStart = signed('start');
  if (byStart) return byStart;
  const compression = compressionOfBytes(head);
  if (compression) {
    const read = (offset: number, length: number) => ends.read(offset, length);
    const inner = decompressHead(read, size, compression, HEAD_BYTES, TEXT_HEAD_MAX);
    // Nothing decodes: the text reader reports the corrupt stream, keeping whatever came before.
    if (inner.data.length === 0 && !inner.whole) return { format: (textHint(hint) ?? ofShape('lines')).format, compression };
    const format = textFormat(inner.data, inner.whole, hint, () => {
      const r = decompressHead(read, size, compression, TEXT_HEAD_MAX, TEXT_HEAD_MAX);
      return { head: r.data, whole: r.whole };
    });
    if (format) return { format: format.format, compression };
    return { format: null, what: `${compression}-compressed data that is not JSON text: it starts with bytes ${hex(inner.data)}${guess(inner.data)}` };
  }
  const damaged = signed('damagedStart');
  if (damaged) return damaged;
  const format = textFormat(head, head.length >= size, hint, () => {
    const h = ends.grow(TEXT_HEAD_MAX);
    return { head: h, whole: h.length >= size };
  });
  if (format) return { format: format.format, compression: 'none' };
  const end = signed('intactEnd');
  if (end) return end;
  const looksText = probe.looksText && !probe.knownOther;
  return {
    format: null,
    what: looksText ? `text that is not JSON: it starts with ${quote(head)}` : `it starts with bytes ${hex(head)}${guess(head)}`,
  };
}
