// Which reader a file needs, from its first and last bytes; the name is only a hint. Magic numbers
// from the formats' specifications: Parquet (`PAR1`; `PARE` for an encrypted footer), Arrow IPC
// file (`ARROW1`, 6 bytes + 2 of padding) and stream (continuation marker 0xFFFFFFFF and a
// metadata length; before Arrow 0.15 a bare little-endian length, then the flatbuffer message),
// gzip (RFC 1952: 1f 8b), zstd (RFC 8878: 28 b5 2f fd). Only a bounded head is ever read.

import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { constants as zlib, gunzipSync } from 'node:zlib';
import { Decompress } from 'fzstd';
import { MESSAGE_SCHEMA, NEWEST_METADATA_VERSION, parseMessage } from './columnar/ipc.js';
import { FbTable } from './columnar/flatbuf.js';
import type { Compression } from './jsonl.js';
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

function startsWith(buf: Uint8Array, magic: number[] | string, at = 0): boolean {
  const m = typeof magic === 'string' ? [...magic].map((c) => c.charCodeAt(0)) : magic;
  if (buf.length < at + m.length) return false;
  for (let k = 0; k < m.length; k++) if (buf[at + k] !== m[k]) return false;
  return true;
}

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
export function arrayOrLines(head: Uint8Array, start: number, whole: boolean): 'jsonl' | 'json-array' | 'unsure' {
  const nl = head.indexOf(0x0a, start);
  if (nl === -1) return whole ? 'json-array' : 'unsure';
  const decode = (a: number, b?: number) => new TextDecoder('utf-8', { fatal: false }).decode(head.subarray(a, b));
  try {
    JSON.parse(decode(start, nl));
  } catch {
    return 'json-array';
  }
  let k = nl + 1;
  while (k < head.length && WS.has(head[k])) k++;
  if (k >= head.length) return whole ? 'json-array' : 'unsure';
  return VALUE_START.test(decode(k, k + 1)) ? 'jsonl' : 'json-array';
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

/** A stream written before Arrow 0.15: a bare metadata length, then a Schema message. */
function isLegacyArrowStream(head: Uint8Array, size: number): boolean {
  if (head.length < 8) return false;
  const dv = new DataView(head.buffer, head.byteOffset, head.byteLength);
  const len = dv.getInt32(0, true);
  if (len < 8 || 4 + len > Math.min(size, head.length)) return false;
  try {
    const h = parseMessage(head.subarray(4, 4 + len), 0, 4 + len);
    return h.type === MESSAGE_SCHEMA && h.version >= 0 && h.version <= NEWEST_METADATA_VERSION;
  } catch {
    return false;
  }
}

/**
 * A damaged stream with the same framing: a length that fits the file, then a flatbuffer whose root
 * table and vtable lie inside it. Text never starts so (it holds no NUL bytes); the stream reader
 * then names what is wrong with the message, instead of a refusal of unknown bytes.
 */
function isDamagedArrowStream(head: Uint8Array, size: number): boolean {
  if (head.length < 8) return false;
  const dv = new DataView(head.buffer, head.byteOffset, head.byteLength);
  const len = dv.getInt32(0, true);
  if (len < 8 || 4 + len > Math.min(size, head.length)) return false;
  try {
    FbTable.root(head.subarray(4, 4 + len));
    return true;
  } catch {
    return false;
  }
}

/**
 * The first `want` bytes of decompressed data from the start of a compressed stream; a corrupt or
 * cut-short stream gives what decoded before the damage. Input grows in steps so no step can
 * expand past a few MiB.
 */
function decompressHead(ends: Ends, compression: 'gzip' | 'zstd', want: number): { data: Buffer; whole: boolean } {
  let out: Buffer = Buffer.alloc(0);
  for (let input = 1024; ; input *= 4) {
    const chunk = ends.read(0, input);
    const all = chunk.length >= ends.size;
    let got: Buffer | null = null;
    try {
      got = compression === 'gzip' ? gunzipSync(chunk, { finishFlush: zlib.Z_SYNC_FLUSH, maxOutputLength: 16 * want }) : unzstdHead(chunk, 16 * want);
    } catch {
      // Corrupt past this point (or more than the cap): keep the previous step's output.
    }
    if (got) out = got;
    if (!got || out.length >= want || all || input >= TEXT_HEAD_MAX) return { data: out.subarray(0, want), whole: all && got !== null && out.length <= want };
  }
}

function unzstdHead(input: Uint8Array, cap: number): Buffer {
  const parts: Uint8Array[] = [];
  let n = 0;
  const d = new Decompress((data) => {
    parts.push(data.slice());
    n += data.length;
  });
  // Small pushes, each checked: one push of RLE blocks could otherwise expand to gigabytes.
  for (let o = 0; o < input.length && n < cap; o += 2048) d.push(input.subarray(o, Math.min(input.length, o + 2048)));
  return Buffer.concat(parts);
}

/** JSON Lines or a JSON array from the start of the (decompressed) text; null when it is not JSON text. */
function textFormat(head: Uint8Array, whole: boolean, hint: NameHint, more: () => { head: Uint8Array; whole: boolean }): FormatName | null {
  let start = textStart(head);
  // Only white space (or a byte order mark): the name decides; JSON Lines holds blank lines.
  if (start === -1) return textFormatOfHint(hint) ?? 'jsonl';
  if (head[start] === 0x7b) return 'jsonl';
  if (head[start] === 0x5b) {
    let kind = arrayOrLines(head, start, whole);
    if (kind === 'unsure') {
      const bigger = more();
      start = textStart(bigger.head);
      kind = arrayOrLines(bigger.head, start, bigger.whole);
    }
    // A first line longer than the largest head read is far likelier one array than one line of many.
    return kind === 'unsure' ? 'json-array' : kind;
  }
  // Other JSON values, one a line ("text", 12, null): records or not, the checks say so.
  if (firstLineIsJson(head, start)) return 'jsonl';
  // A shard whose first line is broken still opens under a text name: the reader reports the line.
  if (textFormatOfHint(hint) && isText(head.subarray(0, 4096))) return textFormatOfHint(hint);
  return null;
}

function textFormatOfHint(hint: NameHint): 'jsonl' | 'json-array' | null {
  return hint?.format === 'jsonl' || hint?.format === 'json-array' ? hint.format : null;
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
  if (size === 0) return hint ?? { format: 'jsonl', compression: 'none' };
  // Parquet: magic at both ends; an encrypted footer ends with "PARE" (so does its start).
  if (startsWith(head, 'PAR1') || startsWith(head, 'PARE')) return { format: 'parquet', compression: 'none' };
  if (startsWith(head, 'ARROW1')) return { format: 'arrow-file', compression: 'none' };
  if (startsWith(head, [0xff, 0xff, 0xff, 0xff])) return { format: 'arrow-stream', compression: 'none' };
  const compression: Compression | null = startsWith(head, [0x1f, 0x8b]) ? 'gzip' : startsWith(head, [0x28, 0xb5, 0x2f, 0xfd]) ? 'zstd' : null;
  if (compression) {
    const inner = decompressHead(ends, compression, HEAD_BYTES);
    // Nothing decodes: the text reader reports the corrupt stream, keeping whatever came before.
    if (inner.data.length === 0 && !inner.whole) return { format: textFormatOfHint(hint) ?? 'jsonl', compression };
    const format = textFormat(inner.data, inner.whole, hint, () => {
      const r = decompressHead(ends, compression, TEXT_HEAD_MAX);
      return { head: r.data, whole: r.whole };
    });
    if (format) return { format, compression };
    return { format: null, what: `${compression}-compressed data that is not JSON text: it starts with bytes ${hex(inner.data)}${guess(inner.data)}` };
  }
  if (isLegacyArrowStream(head, size)) return { format: 'arrow-stream', compression: 'none' };
  if (!guess(head) && !isText(head.subarray(0, 4096)) && isDamagedArrowStream(head, size)) return { format: 'arrow-stream', compression: 'none' };
  const format = textFormat(head, head.length >= size, hint, () => {
    const h = ends.grow(TEXT_HEAD_MAX);
    return { head: h, whole: h.length >= size };
  });
  if (format) return { format, compression: 'none' };
  // A damaged start with an intact end: the columnar reader names what is wrong with the start.
  const tail4 = tail.subarray(Math.max(0, tail.length - 4));
  if (size >= 12 && (startsWith(tail4, 'PAR1') || startsWith(tail4, 'PARE'))) return { format: 'parquet', compression: 'none' };
  if (size >= 12 && startsWith(tail, 'ARROW1', tail.length - 6)) return { format: 'arrow-file', compression: 'none' };
  const looksText = isText(head.subarray(0, 4096)) && !guess(head);
  return {
    format: null,
    what: looksText ? `text that is not JSON: it starts with ${quote(head)}` : `it starts with bytes ${hex(head)}${guess(head)}`,
  };
}
