// Expected contents of a demo shard, computed without the product's engine: JSONL by the JSON
// Lines rules and the platform's JSON.parse, Parquet by hyparquet, Arrow by apache-arrow's reader.
import { readFileSync } from 'node:fs';
import { gunzipSync } from 'node:zlib';

/**
 * JSON Lines (jsonlines.org): one UTF-8 value per `\n`-terminated line, the last terminator optional;
 * RFC 8259 §8.1: a byte order mark is not part of the text. JSON.parse is the RFC 8259 parser here.
 * @returns {{ entries: number, records: number, blank: number, invalid: number, firstRecordLine: number|null, lines: string[] }}
 */
export function jsonlFacts(bytes) {
  let text = new TextDecoder('utf-8').decode(bytes);
  const lines = text.split('\n');
  if (lines.length && lines[lines.length - 1] === '') lines.pop(); // a final `\n` ends a line, it opens none
  let records = 0, blank = 0, invalid = 0, firstRecordLine = null;
  lines.forEach((raw, i) => {
    // JSON Lines tolerates `\r\n`; the `\r` is trailing white space.
    const line = raw.replace(/^\uFEFF/, '').replace(/\r$/, '');
    if (line.trim() === '') { blank++; return; }
    try {
      JSON.parse(line);
      records++;
      if (firstRecordLine === null) firstRecordLine = i + 1;
    } catch { invalid++; }
  });
  return { entries: lines.length, records, blank, invalid, firstRecordLine, lines };
}

/** Reads a shard's bytes, undoing gzip (zstd shards are left to the product and not used here). */
export function shardBytes(path) {
  const b = readFileSync(path);
  return path.endsWith('.gz') ? gunzipSync(b) : b;
}

/** Row count and first row of a Parquet file by hyparquet, an independent pure-JS reader. */
export async function parquetFacts(path) {
  const { parquetMetadata, parquetReadObjects } = await import('hyparquet');
  const { compressors } = await import('hyparquet-compressors');
  const buf = readFileSync(path);
  const file = buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength);
  const meta = parquetMetadata(file);
  const first = await parquetReadObjects({ file, compressors, rowStart: 0, rowEnd: 1 });
  return { rows: Number(meta.num_rows), firstRow: first[0] };
}

/** Row count and first row of an Arrow IPC file or stream by apache-arrow's own reader. */
export async function arrowFacts(path) {
  const { tableFromIPC } = await import('apache-arrow');
  const table = tableFromIPC(readFileSync(path));
  return { rows: table.numRows, firstRow: table.numRows ? table.get(0)?.toJSON() : undefined };
}

/** A short, plainly-printable string taken from the first string field of a record, to look for on screen. */
export function probeText(record) {
  const walk = (v) => {
    if (typeof v === 'string' && /[A-Za-z]{4,}/.test(v)) return v;
    if (Array.isArray(v)) { for (const x of v) { const s = walk(x); if (s) return s; } }
    else if (v && typeof v === 'object') { for (const x of Object.values(v)) { const s = walk(x); if (s) return s; } }
    return null;
  };
  const s = walk(record);
  if (!s) return null;
  // A word run from the start, short enough to survive cutting and white-space folding in a cell.
  return s.replace(/\s+/g, ' ').trim().slice(0, 24);
}

const encoders = new Map();
/**
 * Token count of `text` by the `tiktoken` npm package (OpenAI's tokenizer compiled to WebAssembly),
 * special-token spellings counted as ordinary text, as the product documents it.
 */
export async function referenceTokenCount(text, encoding) {
  if (!encoders.has(encoding)) {
    const { get_encoding } = await import('tiktoken');
    encoders.set(encoding, get_encoding(encoding));
  }
  return encoders.get(encoding).encode_ordinary(text).length;
}
