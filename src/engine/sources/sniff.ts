// Which reader a file needs, from its first and last bytes; the name is only a hint. Magic numbers
// from the formats' specifications: Parquet (`PAR1`, `PARE` for an encrypted footer), Arrow IPC
// file (`ARROW1`) and stream (continuation marker 0xFFFFFFFF, or a bare length before 0.15), gzip
// (RFC 1952: 1f 8b), zstd (RFC 8878: 28 b5 2f fd).

import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { gunzipSync } from 'node:zlib';
import type { FormatName } from './source.js';

export type Sniffed = { format: FormatName; compression: 'none' | 'gzip' | 'zstd'; encrypted?: boolean } | { format: null; what: string };

const HEAD = 64 * 1024;

function readEnds(path: string): { head: Buffer; tail: Buffer; size: number } {
  const fd = openSync(path, 'r');
  try {
    const size = fstatSync(fd).size;
    const head = Buffer.alloc(Math.min(HEAD, size));
    readSync(fd, head, 0, head.length, 0);
    const tail = Buffer.alloc(Math.min(8, size));
    readSync(fd, tail, 0, tail.length, Math.max(0, size - tail.length));
    return { head, tail, size };
  } finally {
    closeSync(fd);
  }
}

/** JSON Lines or one JSON array, from the start of the (decompressed) text. */
export function textKind(head: Buffer): 'jsonl' | 'json-array' {
  let text = head.toString('utf8');
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const start = text.search(/\S/);
  if (start === -1 || text[start] !== '[') return 'jsonl';
  // `[` opens either the one array of the file or the first of several one-line values.
  const nl = text.indexOf('\n', start);
  if (nl === -1) return 'json-array';
  const first = text.slice(start, nl).trim();
  const rest = text.slice(nl + 1).trimStart();
  try {
    JSON.parse(first);
    // A whole value on the first line followed by another value: JSON Lines.
    return rest === '' || /^[[{"\-0-9tfn]/.test(rest) ? (rest === '' ? 'json-array' : 'jsonl') : 'json-array';
  } catch {
    return 'json-array';
  }
}

export function sniff(path: string): Sniffed {
  const { head, tail, size } = readEnds(path);
  const at = (buf: Buffer, s: string, off = 0) => buf.length >= off + s.length && buf.toString('latin1', off, off + s.length) === s;
  if (size === 0) return { format: null, what: 'an empty file' };
  if (at(head, 'PARE') || (at(head, 'PAR1') && at(tail, 'PARE', Math.max(0, tail.length - 4)))) return { format: 'parquet', compression: 'none', encrypted: true };
  if (at(head, 'PAR1')) return { format: 'parquet', compression: 'none' };
  if (at(head, 'ARROW1')) return { format: 'arrow-file', compression: 'none' };
  if (head.length >= 8 && head.readUInt32LE(0) === 0xffffffff) return { format: 'arrow-stream', compression: 'none' };
  if (head.length >= 2 && head[0] === 0x1f && head[1] === 0x8b) {
    let inner: Buffer;
    try {
      inner = gunzipSync(head, { finishFlush: 2 });
    } catch {
      inner = Buffer.alloc(0);
    }
    return { format: textKind(inner), compression: 'gzip' };
  }
  if (head.length >= 4 && head.readUInt32LE(0) === 0xfd2fb528) return { format: 'jsonl', compression: 'zstd' };
  // Streams written before Arrow 0.15: a bare little-endian metadata length, then the flatbuffer.
  const c = head.toString('utf8', 0, Math.min(head.length, 4096)).replace(/^\uFEFF/, '').trimStart()[0];
  if (c === '{' || c === '[' || c === '"' || c === undefined) return { format: textKind(head), compression: 'none' };
  if (head.length >= 8 && head.readUInt32LE(0) >= 8 && head.readUInt32LE(0) < size && head.readUInt32LE(4) < head.readUInt32LE(0)) {
    return { format: 'arrow-stream', compression: 'none' };
  }
  return { format: null, what: `starts with bytes ${[...head.subarray(0, 8)].map((b) => b.toString(16).padStart(2, '0')).join(' ')}` };
}
