// JSON Lines (jsonlines.org): one JSON value a line, plain or wrapped in gzip or zstd.

import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { decompressHead, type Compression } from '../decompress.js';
import type { FormatEntry } from '../format.js';
import { JsonlSource } from '../jsonl.js';

const HEAD = 64 * 1024;

export const jsonlFormat: FormatEntry = {
  format: 'jsonl',
  title: 'JSON Lines',
  traits: { textual: true, oneLinePerEntry: true, entries: 'lines', group: null, wasmMemory: false },
  endings: ['.jsonl', '.ndjson', '.jsonl.gz', '.ndjson.gz', '.jsonl.zst', '.ndjson.zst'],
  jsonText: 'lines',
  notAShard: isOneJsonDocument,
  create: (p, o, compression) => new JsonlSource(p, { ...o, compression }),
};

/**
 * A pretty-printed JSON object (a schema, a manifest, a settings file) reads as JSON Lines of broken
 * lines; a folder walk leaves it out: its first line opens an object that the line does not close.
 */
function isOneJsonDocument(path: string, compression: Compression): boolean {
  const fd = openSync(path, 'r');
  try {
    const size = fstatSync(fd).size;
    const read = (offset: number, length: number): Uint8Array => {
      const buf = Buffer.alloc(Math.max(0, Math.min(length, size - offset)));
      const n = readSync(fd, buf, 0, buf.length, offset);
      return buf.subarray(0, n);
    };
    // The start of the stream is enough.
    const bytes = compression === 'none' ? read(0, HEAD) : decompressHead(read, size, compression, HEAD, HEAD).data;
    const head = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8').replace(/^\uFEFF/, '');
    const first = head.trimStart();
    if (!first.startsWith('{')) return false;
    const nl = first.indexOf('\n');
    if (nl === -1) return false;
    try {
      JSON.parse(first.slice(0, nl));
      return false;
    } catch {
      return true;
    }
  } finally {
    closeSync(fd);
  }
}
