// Our Parquet source against an independent reader: hyparquet (+ hyparquet-compressors) from the
// npm registry reads the same generated files and must agree row by row. Files are generated at
// test time in os.tmpdir() by parquet-wasm's writer: several row groups, every codec, nested
// columns, nulls, 64-bit integers. Also proves the bytes-read bound of opening plus one page.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { tableFromArrays, tableToIPC, makeVector, vectorFromArray, Table, List, Struct, Field, Utf8, Int64 } from 'apache-arrow';
import * as pw from 'parquet-wasm/node';
import { parquetReadObjects } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { ParquetSource, wasmMemoryBytes } from '../../../../src/engine/sources/parquet.js';
import { countingReader, openFileReader } from '../../../../src/engine/sources/columnar/byteReader.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-parquet-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Our own small chat-shaped table: ids, optional text, 64-bit counts, turns as list<struct>. */
function chatTable(rows: number): Table {
  const turnType = new List(new Field('item', new Struct([new Field('role', new Utf8(), true), new Field('content', new Utf8(), true)]), true));
  const turns = vectorFromArray(
    Array.from({ length: rows }, (_, i) =>
      i % 7 === 3 ? null : [{ role: 'user', content: `my chain skips on gear ${i % 11}` }, { role: 'assistant', content: i % 5 ? 'check the derailleur hanger' : null }],
    ),
    turnType,
  );
  const big = vectorFromArray(Array.from({ length: rows }, (_, i) => (i % 9 === 0 ? 2n ** 60n + BigInt(i) : BigInt(i) * 1000n)), new Int64());
  const base = tableFromArrays({
    id: Int32Array.from({ length: rows }, (_, i) => i),
    note: Array.from({ length: rows }, (_, i) => (i % 4 === 0 ? null : `ticket ${i}`)),
    score: Float64Array.from({ length: rows }, (_, i) => i / 8),
  });
  return new Table({ id: base.getChild('id')!, note: base.getChild('note')!, score: base.getChild('score')!, tokens: big, turns });
}

function writeParquetFile(name: string, table: Table, compression: pw.Compression, rowGroupRows: number): string {
  const props = new pw.WriterPropertiesBuilder().setCompression(compression).setMaxRowGroupSize(rowGroupRows).build();
  const bytes = pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(table, 'stream')), props);
  const p = join(dir, name);
  writeFileSync(p, bytes);
  return p;
}

/** hyparquet's rows in our JSON conventions: bigint beyond 2^53 as string, else number. */
function normalise(v: unknown): unknown {
  if (typeof v === 'bigint') return v > 2n ** 53n - 1n || v < -(2n ** 53n - 1n) ? v.toString() : Number(v);
  if (Array.isArray(v)) return v.map(normalise);
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, normalise(x)]));
  return v === undefined ? null : v;
}

const CODECS: [string, pw.Compression][] = [
  ['uncompressed', pw.Compression.UNCOMPRESSED],
  ['snappy', pw.Compression.SNAPPY],
  ['gzip', pw.Compression.GZIP],
  ['brotli', pw.Compression.BROTLI],
  ['zstd', pw.Compression.ZSTD],
  ['lz4 raw', pw.Compression.LZ4_RAW],
];

describe('agrees row by row with hyparquet (independent reader, npm registry)', () => {
  for (const [name, codec] of CODECS) {
    it(`${name}: 5 row groups, nested turns, nulls, 64-bit integers`, async () => {
      const p = writeParquetFile(`chat-${name.replace(' ', '-')}.parquet`, chatTable(250), codec, 50);
      const src = new ParquetSource(p);
      const info = await src.open();
      expect(info.groups?.length).toBe(5);
      expect(Object.values(info.groups![0].codecs!)).toContain(name);
      const ours = (await src.read(0, info.entries)).map((e) => e.value);
      await src.close();
      const buf = readFileSync(p);
      const theirs = await parquetReadObjects({ file: buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength), compressors });
      expect(ours.length).toBe(theirs.length);
      ours.forEach((row, i) => expect(row, `row ${i}`).toEqual(normalise(theirs[i])));
    });
  }

  it('flags 64-bit integers beyond ±(2^53−1) (RFC 8259 §6) and keeps them exact as strings', async () => {
    const p = writeParquetFile('unsafe.parquet', chatTable(10), pw.Compression.SNAPPY, 10);
    const src = new ParquetSource(p);
    await src.open();
    const [row0] = await src.read(0, 1);
    await src.close();
    expect((row0.value as { tokens: unknown }).tokens).toBe((2n ** 60n).toString());
    expect(row0.findings.map((f) => [f.rule, f.pointer])).toEqual([['number-unsafe', '/tokens']]);
  });
});

describe('opening plus the first page reads the footer and no more than the row groups on screen', () => {
  it('tens of MB in 40 row groups: bytes read stay under footer + one row group', async () => {
    const rows = 40 * 2000;
    const text = Array.from({ length: rows }, (_, i) => `${i.toString(36)} `.repeat(40));
    const table = tableFromArrays({ id: Int32Array.from({ length: rows }, (_, i) => i), text });
    const p = writeParquetFile('big.parquet', table, pw.Compression.UNCOMPRESSED, 2000);
    let counter: ReturnType<typeof countingReader> | null = null;
    const src = new ParquetSource(p, { openReader: async (path) => (counter = countingReader(await openFileReader(path))) });
    const info = await src.open();
    expect(info.sizeBytes).toBeGreaterThan(10 * 1024 * 1024);
    const afterOpen = counter!.bytesRead;
    const page = await src.read(0, 50);
    expect(page.map((e) => (e.value as { id: number }).id)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    const tail = readFileSync(p).subarray(-8);
    const footer = tail.readUInt32LE(0) + 8;
    const group0 = info.groups![0].compressedBytes!;
    // Bound from the issue: the footer (plus its magic and a small read-ahead) and the row group shown.
    expect(afterOpen).toBeLessThanOrEqual(footer + 64 * 1024);
    expect(counter!.bytesRead).toBeLessThanOrEqual(footer + 64 * 1024 + group0 + 64 * 1024);
    expect(counter!.bytesRead).toBeLessThan(info.sizeBytes / 10);
    expect(wasmMemoryBytes()).toBeGreaterThan(0);
    await src.close();
  });
});

describe('opening fails clearly for what is not a file', () => {
  it('a missing path rejects with an Error starting with the path', async () => {
    const p = join(dir, 'nope.parquet');
    await expect(new ParquetSource(p).open()).rejects.toThrow(new RegExp(`^${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`));
  });
  it('a folder rejects with an Error starting with the path', async () => {
    await expect(new ParquetSource(dir).open()).rejects.toThrow(/not a file/);
  });
  it('a cut-short file opens with a read-truncated finding, never a throw', async () => {
    const full = readFileSync(writeParquetFile('whole.parquet', chatTable(20), pw.Compression.SNAPPY, 10));
    const p = join(dir, 'cut.parquet');
    writeFileSync(p, full.subarray(0, full.length - 30));
    const info = await new ParquetSource(p).open();
    expect(info.findings.map((f) => f.rule)).toEqual(['read-truncated']);
  });
});
