// Parquet source against apache/parquet-testing (../shared/testdata/parquet, SOURCES.md:
// parquet-testing data/ and bad_data/, commit 1a2a7512). Expected values are the ones SOURCES.md
// and the repository's own .md / _expect.csv files document.

import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ParquetSource } from '../../../../src/engine/sources/parquet.js';
import type { Entry, SourceInfo } from '../../../../src/engine/sources/source.js';
import { requireTestdata } from './testdata.js';

const dir = requireTestdata('parquet');
const known = JSON.parse(readFileSync(new URL('./parquet.known-failures.json', import.meta.url), 'utf8')) as { files: string[]; int96Rows: number[] };

async function readAll(name: string, limit = Infinity): Promise<{ info: SourceInfo; rows: Entry[] }> {
  const s = new ParquetSource(join(dir, name));
  try {
    const info = await s.open();
    return { info, rows: await s.read(0, Math.min(info.entries, limit)) };
  } finally {
    await s.close();
  }
}
const col = (rows: Entry[], name: string) => rows.map((r) => (r.value as Record<string, unknown>)[name]);

describe('documented values (SOURCES.md "Expected values")', () => {
  it('alltypes_plain: 8 rows, 11 columns, ids 4,5,6,7,2,3,0,1, bool_col alternating from true', async () => {
    const { info, rows } = await readAll('alltypes_plain.parquet');
    expect(info.entries).toBe(8);
    expect(info.columns?.length).toBe(11);
    expect(col(rows, 'id')).toEqual([4, 5, 6, 7, 2, 3, 0, 1]);
    expect(col(rows, 'bool_col')).toEqual([true, false, true, false, true, false, true, false]);
  });
  it('alltypes_plain.snappy: ids 6,7; alltypes_dictionary: ids 0,1', async () => {
    expect(col((await readAll('alltypes_plain.snappy.parquet')).rows, 'id')).toEqual([6, 7]);
    expect(col((await readAll('alltypes_dictionary.parquet')).rows, 'id')).toEqual([0, 1]);
  });
  it('datapage_v2.snappy: 5 rows; first a="abc", b=1, c=2, d=true, e=[1,2,3]; 4th a=null', async () => {
    const { info, rows } = await readAll('datapage_v2.snappy.parquet');
    expect(info.entries).toBe(5);
    expect(rows[0].value).toMatchObject({ a: 'abc', b: 1, c: 2, d: true, e: [1, 2, 3] });
    expect((rows[3].value as { a: unknown }).a).toBeNull();
  });
  it('nested_lists.snappy: 3 rows, first [[["a","b"],["c"]],[null,["d"]]]', async () => {
    const { info, rows } = await readAll('nested_lists.snappy.parquet');
    expect(info.entries).toBe(3);
    expect((rows[0].value as { a: unknown }).a).toEqual([[['a', 'b'], ['c']], [null, ['d']]]);
  });
  it('lz4_raw_compressed: 4 rows, c1 = abc, def, abc, def (binary shown as length + hex)', async () => {
    const { rows } = await readAll('lz4_raw_compressed.parquet');
    // c1 is plain BYTE_ARRAY without a string annotation: shown as bytes; "abc" = 616263, "def" = 646566.
    expect(col(rows, 'c1')).toEqual(['<3 bytes: 616263>', '<3 bytes: 646566>', '<3 bytes: 616263>', '<3 bytes: 646566>']);
  });
  it('row counts: list_columns 3, byte_stream_split.zstd 300, delta_length_byte_array 1000', async () => {
    expect((await readAll('list_columns.parquet', 0)).info.entries).toBe(3);
    expect((await readAll('byte_stream_split.zstd.parquet', 0)).info.entries).toBe(300);
    expect((await readAll('delta_length_byte_array.parquet', 0)).info.entries).toBe(1000);
  });
});

/** RFC 4180 CSV, enough for the _expect.csv files (quoted fields, empty = null). */
function parseCsv(text: string): (string | null)[][] {
  const rows: (string | null)[][] = [];
  for (const line of text.split(/\r?\n/)) {
    if (!line) continue;
    const out: (string | null)[] = [];
    let k = 0;
    while (k <= line.length) {
      if (line[k] === '"') {
        let v = '';
        k++;
        while (k < line.length) {
          if (line[k] === '"' && line[k + 1] === '"') { v += '"'; k += 2; } else if (line[k] === '"') { k++; break; } else v += line[k++];
        }
        out.push(v);
        k++;
      } else {
        const e = line.indexOf(',', k);
        const end = e < 0 ? line.length : e;
        const v = line.slice(k, end);
        out.push(v === '' ? null : v);
        k = end + 1;
      }
    }
    rows.push(out);
  }
  return rows;
}

describe('delta encodings against the *_expect.csv files beside them (parquet-testing)', () => {
  for (const base of ['delta_binary_packed', 'delta_byte_array', 'delta_encoding_optional_column', 'delta_encoding_required_column']) {
    it(base, async () => {
      const csv = parseCsv(readFileSync(join(dir, `${base}_expect.csv`), 'utf8')).slice(1);
      const { rows } = await readAll(`${base}.parquet`);
      expect(rows.length).toBe(csv.length);
      rows.forEach((r, i) => {
        // Columns compared by position: the CSV headers differ in spaces and colons from the schema.
        const ours = Object.values(r.value as object).map((v) => (v === null ? null : String(v)));
        expect(ours, `row ${i}`).toEqual(csv[i]);
      });
    });
  }
});

describe('int96_from_spark (timestamps documented in int96_from_spark.md as microseconds)', () => {
  const micros = [1704141296123456n, 1704070800000000n, 253402225200000000n, 1735599600000000n, null, 9089380393200000000n];
  it('rows match the documented instants, except the listed rows beyond nanosecond range', async () => {
    const { rows } = await readAll('int96_from_spark.parquet');
    expect(rows.length).toBe(6);
    const failing: number[] = [];
    micros.forEach((m, i) => {
      const got = (rows[i].value as { a: unknown }).a;
      if (m === null) {
        if (got !== null) failing.push(i);
        return;
      }
      const ms = Number(m / 1000n);
      const frac = (m % 1000000n).toString().padStart(6, '0');
      const day = new Date(ms);
      // Year 290000 lies beyond what an ISO-8601 Date prints here: such a row must come back as a non-ISO note.
      if (Number.isNaN(day.getTime())) {
        if (typeof got === 'string' && /^\d{4}-/.test(got)) failing.push(i);
        return;
      }
      const want = `${day.toISOString().slice(0, 19)}.${frac}`;
      // Ours carries nanoseconds: compare on the microsecond prefix.
      if (typeof got !== 'string' || !got.startsWith(want)) failing.push(i);
    });
    expect(failing.filter((i) => !known.int96Rows.includes(i))).toEqual([]);
    expect(known.int96Rows.filter((i) => !failing.includes(i)), 'fixed: shrink int96Rows').toEqual([]);
  });
});

describe('every other file reads or gives a clear error; the error list may only shrink', () => {
  const files = [
    ...readdirSync(dir).filter((f) => f.endsWith('.parquet') || f.endsWith('.parquet.encrypted')),
    ...readdirSync(join(dir, 'bad_data')).filter((f) => f.endsWith('.parquet')).map((f) => `bad_data/${f}`),
  ];
  for (const f of files) {
    it(f, async () => {
      const { info, rows } = await readAll(f, 200);
      const errors = [...info.findings, ...rows.flatMap((r) => r.findings)].filter((x) => x.severity === 'error');
      for (const e of errors) expect(e.message.length).toBeGreaterThan(10);
      // A listed file checks itself: it must still give an error, else it leaves the list.
      if (known.files.includes(f)) expect(errors.length, `${f} now reads: remove it from parquet.known-failures.json`).toBeGreaterThan(0);
      else expect(errors.map((e) => e.message)).toEqual([]);
    });
  }
  it('the known-failures list names only files that exist', () => {
    expect(known.files.filter((f) => !files.includes(f)), 'no such file').toEqual([]);
  });
});
