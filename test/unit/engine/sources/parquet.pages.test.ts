// A Parquet page reads only its rows: values against an independent reader (hyparquet +
// hyparquet-compressors from the npm registry), bytes read against the pages the rows lie on
// (placed by hyparquet's own footer and offset-index readers), and page headers that declare more
// than the memory cap refused before the decoder sees them. Files are written at test time by
// parquet-wasm's writer into os.tmpdir().

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { tableFromArrays, tableToIPC, vectorFromArray, Table, List, Struct, Field, Utf8 } from 'apache-arrow';
import * as pw from 'parquet-wasm/node';
import { parquetMetadata, parquetReadObjects, readOffsetIndex } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { ParquetSource } from '../../../../src/engine/sources/parquet.js';
import { countingReader, openFileReader } from '../../../../src/engine/sources/columnar/byteReader.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-parquet-pages-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Support-desk rows of our own: ids, long varied text, scores, turns as list<struct>. */
function deskTable(rows: number): Table {
  const turnType = new List(new Field('item', new Struct([new Field('role', new Utf8(), true), new Field('content', new Utf8(), true)]), true));
  const turns = vectorFromArray(
    Array.from({ length: rows }, (_, i) => (i % 13 === 5 ? null : [{ role: 'user', content: `wheel ${i} wobbles after truing` }, { role: 'assistant', content: `spoke ${i % 36} tension` }])),
    turnType,
  );
  const base = tableFromArrays({
    id: Int32Array.from({ length: rows }, (_, i) => i),
    text: Array.from({ length: rows }, (_, i) => (i % 6 === 1 ? null : `ticket ${i}: ${Array.from({ length: 24 + (i % 5) }, (_, w) => `${((i + 1) * (w + 7) * 2654435761) % 1e9} pad`).join(' ')}`)),
    score: Float64Array.from({ length: rows }, (_, i) => i / 16),
  });
  return new Table({ id: base.getChild('id')!, text: base.getChild('text')!, score: base.getChild('score')!, turns });
}

function write(name: string, table: Table, props: pw.WriterProperties): string {
  const p = join(dir, name);
  writeFileSync(p, pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(table, 'stream')), props));
  return p;
}

function arrayBufferOf(p: string): ArrayBuffer {
  const b = readFileSync(p);
  return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
}

function normalise(v: unknown): unknown {
  if (typeof v === 'bigint') return Number(v);
  if (Array.isArray(v)) return v.map(normalise);
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, normalise(x)]));
  return v === undefined ? null : v;
}

async function oracleRows(p: string, from: number, to: number, columns?: string[]): Promise<unknown[]> {
  const rows = await parquetReadObjects({ file: arrayBufferOf(p), rowStart: from, rowEnd: to, columns, compressors });
  return rows.map(normalise);
}

/**
 * Bytes a page of rows [from, to) may cost by the issue's bound, placed by hyparquet: the footer
 * and its magic, the page-index region, and per shown column chunk of each touched row group its
 * dictionary page and the pages holding the rows (page sizes include their headers, parquet.thrift).
 */
function pageBound(p: string, from: number, to: number, columns: string[] | null): { bound: number; chunkBytes: number } {
  const buf = arrayBufferOf(p);
  const md = parquetMetadata(buf);
  const view = new DataView(buf);
  const footer = view.getUint32(buf.byteLength - 8, true) + 8;
  let indexLo = Infinity;
  let indexHi = 0;
  let pages = 0;
  let chunkBytes = 0;
  let first = 0;
  for (const rg of md.row_groups) {
    const rows = Number(rg.num_rows);
    const lo = Math.max(from, first) - first;
    const hi = Math.min(to, first + rows) - first;
    for (const col of rg.columns) {
      if (col.column_index_offset !== undefined) {
        indexLo = Math.min(indexLo, Number(col.column_index_offset));
        indexHi = Math.max(indexHi, Number(col.column_index_offset) + Number(col.column_index_length));
      }
      if (col.offset_index_offset === undefined) throw new Error('the writer wrote no offset index');
      const oiAt = Number(col.offset_index_offset);
      indexLo = Math.min(indexLo, oiAt);
      indexHi = Math.max(indexHi, oiAt + Number(col.offset_index_length));
      if (hi <= lo) continue;
      const top = col.meta_data!.path_in_schema[0];
      if (columns && !columns.includes(top)) continue;
      chunkBytes += Number(col.meta_data!.total_compressed_size);
      const locs = readOffsetIndex({ view: new DataView(buf, oiAt, Number(col.offset_index_length)), offset: 0 }).page_locations;
      const start = Number(col.meta_data!.dictionary_page_offset ?? col.meta_data!.data_page_offset);
      pages += Number(locs[0].offset) - start; // the dictionary page, when there is one
      locs.forEach((l, k) => {
        const next = k + 1 < locs.length ? Number(locs[k + 1].first_row_index) : Infinity;
        if (Number(l.first_row_index) < hi && next > lo) pages += l.compressed_page_size;
      });
    }
    first += rows;
  }
  return { bound: footer + (indexHi - indexLo) + pages, chunkBytes };
}

const INDEXED = () =>
  new pw.WriterPropertiesBuilder()
    .setCompression(pw.Compression.SNAPPY)
    .setMaxRowGroupSize(40_000)
    .setDataPageSizeLimit(32 * 1024)
    .setColumnDictionaryEnabled('text', false)
    .setStatisticsEnabled(pw.EnabledStatistics.Page)
    .build();

describe('a page decodes only its rows and reads only their pages (page index written)', () => {
  let p: string;
  beforeAll(() => {
    p = write('desk.parquet', deskTable(36_000), INDEXED());
  });

  // The last entry of a case says whether the shown chunks are large (they hold the text column).
  for (const [from, to, columns, large] of [
    [0, 100, null, true],
    [17_000, 17_100, ['id', 'text'], true],
    [35_950, 36_000, ['turns'], false],
  ] as [number, number, string[] | null, boolean][]) {
    it(`rows ${from}–${to} of one 36,000-row group${columns ? `, columns ${columns.join(', ')}` : ''}: same values as hyparquet, bytes within the pages of those rows`, async () => {
      let counter: ReturnType<typeof countingReader> | null = null;
      const src = new ParquetSource(p, { openReader: async (path) => (counter = countingReader(await openFileReader(path))) });
      const info = await src.open();
      expect(info.groups?.length).toBe(1);
      const page = await src.read(from, to, columns ? { columns } : {});
      const { bound, chunkBytes } = pageBound(p, from, to, columns);
      // Header reads of our pre-check ask for up to 256 bytes beyond each page's header.
      expect(counter!.bytesRead).toBeLessThanOrEqual(bound + 16 * 1024);
      // Where the shown chunks are large (the text column), the page costs a small part of them.
      expect(chunkBytes > 1024 * 1024, `${chunkBytes} bytes in the shown chunks`).toBe(large);
      if (large) expect(counter!.bytesRead).toBeLessThan(chunkBytes / 10);
      expect(page.map((e) => e.entry)).toEqual(Array.from({ length: to - from }, (_, i) => from + i));
      expect(page.map((e) => e.rowInGroup)).toEqual(Array.from({ length: to - from }, (_, i) => from + i));
      expect(page.map((e) => e.value)).toEqual(await oracleRows(p, from, to, columns ?? undefined));
      // The same page again comes from the byte-budget cache: no byte is read.
      const before = counter!.bytesRead;
      await src.read(from, to, columns ? { columns } : {});
      expect(counter!.bytesRead).toBe(before);
      await src.close();
    });
  }

  it('a page across row groups, then the whole-file scan, agree with hyparquet', async () => {
    const q = write(
      'desk-groups.parquet',
      deskTable(5_000),
      new pw.WriterPropertiesBuilder().setCompression(pw.Compression.ZSTD).setMaxRowGroupSize(1_200).setDataPageSizeLimit(8 * 1024).build(),
    );
    const src = new ParquetSource(q);
    const info = await src.open();
    expect(info.groups?.length).toBe(5);
    const page = await src.read(1_150, 1_260);
    expect(page.map((e) => [e.group, e.rowInGroup])).toEqual(Array.from({ length: 110 }, (_, i) => (i < 50 ? [0, 1_150 + i] : [1, i - 50])));
    expect(page.map((e) => e.value)).toEqual(await oracleRows(q, 1_150, 1_260));
    const all: unknown[] = [];
    for await (const e of src.scan()) all.push(e.value);
    expect(all).toEqual(await oracleRows(q, 0, 5_000));
    await src.close();
  });
});

/** Rewrites the zigzag varint at `at` (uncompressed_page_size) to the largest value that fits in its bytes. */
function inflateVarint(bytes: Uint8Array, at: number): number {
  let n = 0;
  while (bytes[at + n] & 0x80) n++;
  n++;
  // Zigzag: an even varint 2v encodes v ≥ 0, so the low bit stays clear and every other bit is set.
  for (let k = 0; k < n; k++) bytes[at + k] = (k < n - 1 ? 0xff : 0x7f) & (k === 0 ? 0xfe : 0xff);
  return 2 ** (7 * n - 1) - 1;
}

/**
 * Makes the page header at `offset` claim a larger uncompressed size. A PageHeader in Thrift's
 * compact protocol starts with field 1 (type, i32: 0x15 and its zigzag varint) then field 2
 * (uncompressed_page_size: 0x15 and its varint) — parquet.thrift field order, as writers emit it.
 */
function lieAbout(file: Uint8Array, offset: number, type: number): number {
  expect(file[offset]).toBe(0x15);
  expect(file[offset + 1]).toBe(type * 2);
  expect(file[offset + 2]).toBe(0x15);
  return inflateVarint(file, offset + 3);
}

describe('a page header that declares more than the memory cap is refused before decoding', () => {
  const CAP = 512 * 1024;

  function craft(name: string, dictionary: boolean): { p: string; claimed: number; rows: number } {
    // Our own rows: one distinct 400-byte note per row, so one page holds about 300 KB.
    const rows = 1_600;
    const table = tableFromArrays({ note: Array.from({ length: rows }, (_, i) => `${i}: ${'derailleur cable stretch '.repeat(16)}`) });
    const props = new pw.WriterPropertiesBuilder()
      .setCompression(pw.Compression.UNCOMPRESSED)
      .setDictionaryEnabled(dictionary)
      .setDictionaryPageSizeLimit(4 * 1024 * 1024)
      .setDataPageSizeLimit(300 * 1024)
      .setMaxRowGroupSize(800)
      .build();
    const good = write(`${name}-good.parquet`, table, props);
    const file = new Uint8Array(readFileSync(good));
    const md = parquetMetadata(file.buffer.slice(file.byteOffset, file.byteOffset + file.byteLength) as ArrayBuffer);
    const col = md.row_groups[0].columns[0].meta_data!;
    // The footer's own sizes stay under the cap, so only the page header lies.
    expect(Number(col.total_uncompressed_size)).toBeLessThan(CAP);
    const at = Number(dictionary ? col.dictionary_page_offset : col.data_page_offset);
    const claimed = lieAbout(file, at, dictionary ? 2 : 0);
    expect(claimed).toBeGreaterThan(CAP);
    const p = join(dir, `${name}-lying.parquet`);
    writeFileSync(p, file);
    return { p, claimed, rows };
  }

  for (const dictionary of [false, true]) {
    const kind = dictionary ? 'dictionary page' : 'data page';
    it(`a ${kind} that claims ~1 MiB under a 512 KiB cap: a read-limit finding for page and scan, the next row group still reads`, async () => {
      const { p, rows, claimed } = craft(dictionary ? 'dict' : 'plain', dictionary);
      const src = new ParquetSource(p, { maxDecodedBytes: CAP });
      const info = await src.open();
      expect(info.findings).toEqual([]);
      const page = await src.read(0, 100);
      expect(page.length).toBe(100);
      expect(page[0].findings.map((f) => f.rule)).toEqual(['read-limit']);
      expect(page[0].findings[0].message).toMatch(new RegExp(`^column "note", row group 0: the ${kind} at byte \\d+ declares ${claimed} bytes .*over the 512 KiB memory cap`));
      expect(page.every((e) => e.value === undefined)).toBe(true);
      // Row group 1 was written honestly: its rows match hyparquet's.
      const next = await src.read(800, 900);
      expect(next.map((e) => e.value)).toEqual(await oracleRows(p, 800, 900));
      const scanned: string[] = [];
      let valued = 0;
      for await (const e of src.scan()) {
        scanned.push(...e.findings.map((f) => f.rule));
        if (e.value !== undefined) valued += 1;
      }
      expect(scanned).toEqual(['read-limit']);
      expect(valued).toBe(rows - 800);
      await src.close();
    });
  }

  it('the same lying file under the default cap is read by the decoder, which names the damage or reads it', async () => {
    const { p } = craft('default-cap', false);
    const src = new ParquetSource(p);
    await src.open();
    const page = await src.read(0, 10);
    expect(page.length).toBe(10);
    expect(page[0].findings.every((f) => f.rule !== 'read-limit')).toBe(true);
    await src.close();
  });
});
