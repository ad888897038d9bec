// What the Parquet decoder cannot read is decided from the footer by our own reading of it, by
// type: a codec or an encoding number the format does not define, an LZO chunk, encryption. What
// the decoder refuses after that is damage, whatever its words. Files are written at test time by
// parquet-wasm's writer (npm) and their footers patched in place (parquet.thrift field ids and the
// Thrift compact protocol); hyparquet (npm), an independent reader, checks our reading of a footer.

import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { tableFromArrays, tableToIPC } from 'apache-arrow';
import * as pw from 'parquet-wasm/node';
import { parquetMetadata } from 'hyparquet';
import { ParquetSource } from '../../../../src/engine/sources/parquet.js';
import { PARQUET_CODECS, PARQUET_ENCODINGS, chunkRefusal, footerFeatures, footerRefusal } from '../../../../src/engine/sources/columnar/parquetFeatures.js';
import { UnsupportedFeature } from '../../../../src/engine/errors.js';
import { footerEnums, withEnum } from './parquetPatch';
import { requireTestdata } from './testdata';

/** What the source asked of the decoder, and what the test makes it throw. */
const lib = vi.hoisted(() => ({
  opens: 0,
  reads: [] as number[][],
  openThrows: null as string | null,
  readThrows: null as string | null,
}));

// The real decoder, with its entry points counted and, on request, made to throw a given message.
vi.mock('parquet-wasm/node', async (importOriginal) => {
  const real = await importOriginal<typeof import('parquet-wasm/node')>();
  const ParquetFile = {
    async fromFile(blob: Blob) {
      lib.opens += 1;
      if (lib.openThrows !== null) throw new Error(lib.openThrows);
      const file = await real.ParquetFile.fromFile(blob);
      return new Proxy(file, {
        get(target, key) {
          if (key === 'read') {
            return async (opts: { rowGroups?: number[] }) => {
              lib.reads.push(opts.rowGroups ?? []);
              if (lib.readThrows !== null) throw new Error(lib.readThrows);
              return target.read(opts as never);
            };
          }
          const v = Reflect.get(target, key) as unknown;
          return typeof v === 'function' ? (v as (...a: unknown[]) => unknown).bind(target) : v;
        },
      });
    },
  };
  return { ...real, ParquetFile };
});

let dir: string;
let base: Uint8Array;
const ROWS = 100;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-parquet-features-'));
  // Our own rows: repair tickets of the bicycle co-op, two row groups of 50.
  const t = tableFromArrays({
    id: Int32Array.from({ length: ROWS }, (_, i) => i),
    note: Array.from({ length: ROWS }, (_, i) => `ticket ${i}: true the rear wheel`),
  });
  const props = new pw.WriterPropertiesBuilder().setCompression(pw.Compression.UNCOMPRESSED).setDictionaryEnabled(false).setMaxRowGroupSize(50).build();
  base = pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(t, 'stream')), props);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
beforeEach(() => {
  lib.opens = 0;
  lib.reads = [];
  lib.openThrows = null;
  lib.readThrows = null;
});

let n = 0;
function write(bytes: Uint8Array): string {
  const p = join(dir, `shard-${n++}.parquet`);
  writeFileSync(p, bytes);
  return p;
}

function footerOf(file: Uint8Array): Uint8Array {
  const len = new DataView(file.buffer, file.byteOffset, file.byteLength).getUint32(file.length - 8, true);
  return file.subarray(file.length - 8 - len, file.length - 8);
}

/** `base` with the codec of column `note` in row group `group` set to `codec` (parquet-format's number). */
function withNoteCodec(codec: number, group = 0): Uint8Array {
  const at = footerEnums(base).codecs.find((c) => c.group === group && c.column === 1)!.at;
  return withEnum(base, at, codec);
}

async function readAll(p: string, columns?: string[]) {
  const s = new ParquetSource(p);
  const info = await s.open();
  const rows = await s.read(0, ROWS, { columns });
  await s.close();
  const findings = [...info.findings, ...rows.flatMap((r) => r.findings)];
  return { info, rows, findings, read: rows.filter((r) => r.value !== undefined).length };
}

describe('our reading of the footer', () => {
  it('names each chunk\'s codec and encodings as hyparquet (an independent reader, npm) does', () => {
    for (const codec of [pw.Compression.SNAPPY, pw.Compression.ZSTD, pw.Compression.GZIP, pw.Compression.BROTLI, pw.Compression.LZ4_RAW]) {
      const t = tableFromArrays({ id: Int32Array.from({ length: 10 }, (_, i) => i), note: Array.from({ length: 10 }, (_, i) => `spoke ${i}`) });
      const file = pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(t, 'stream')), new pw.WriterPropertiesBuilder().setCompression(codec).build());
      const ours = footerFeatures(footerOf(file));
      const theirs = parquetMetadata(file.slice().buffer as ArrayBuffer);
      const name = (s: string) => s.toLowerCase().replace(/[^a-z0-9]/g, '');
      expect(ours.groups.map((g) => g.map((c) => [c.path, name(PARQUET_CODECS[c.codec]), c.encodings.map((e) => PARQUET_ENCODINGS[e])]))).toEqual(
        theirs.row_groups.map((g) => g.columns.map((c) => [c.meta_data!.path_in_schema.join('.'), name(c.meta_data!.codec), c.meta_data!.encodings])),
      );
      expect(footerRefusal(ours)).toBeNull();
      expect(chunkRefusal(ours, 0)).toBeNull();
    }
  });

  it('refuses, as an UnsupportedFeature naming the column, a codec number parquet-format does not define', () => {
    const f = footerFeatures(footerOf(withNoteCodec(9)));
    const refusal = footerRefusal(f);
    expect(refusal).toBeInstanceOf(UnsupportedFeature);
    expect([refusal!.column, refusal!.feature]).toEqual(['note', 'codec 9']);
    expect(refusal!.message).toMatch(/^column "note" \(row group 0\) is compressed with codec number 9/);
  });

  it('finds the encrypted columns parquet-testing\'s README names (double_field, float_field) in encrypt_columns_plaintext_footer', () => {
    const file = new Uint8Array(readFileSync(join(requireTestdata('parquet'), 'encrypt_columns_plaintext_footer.parquet.encrypted')));
    const f = footerFeatures(footerOf(file));
    expect(f.encryptedColumns).toBe(true);
    expect(f.groups.flatMap((g) => g.filter((c) => c.encrypted).map((c) => c.path)).sort()).toEqual(['double_field', 'float_field']);
    expect(chunkRefusal(f, 0, ['int32_field', 'ba_field'])).toBeNull();
    expect(chunkRefusal(f, 0, ['double_field'])?.message).toBe('column "double_field" is encrypted (Parquet modular encryption); Shardwise does not decrypt files');
  });

  it('refuses an LZO chunk for the rows that need it, not for the other columns', () => {
    const f = footerFeatures(footerOf(withNoteCodec(3)));
    expect(footerRefusal(f)).toBeNull();
    expect(chunkRefusal(f, 0)?.message).toBe('column "note" is compressed with LZO, which this reader cannot decompress');
    expect(chunkRefusal(f, 0, ['id'])).toBeNull();
    expect(chunkRefusal(f, 1)).toBeNull();
  });
});

describe('read-unsupported is decided from the footer, before the decoder is asked', () => {
  it('the unpatched file reads all its rows through the decoder (the patch is the only difference)', async () => {
    const { findings, read } = await readAll(write(base));
    expect(findings).toEqual([]);
    expect(read).toBe(ROWS);
    expect(lib.opens).toBe(1);
  });

  it('an unknown codec number: one read-unsupported finding at open, and the decoder never opens the file', async () => {
    // Before, the decoder's refusal of the footer ("Unexpected CompressionCodec 8") made it read-footer-invalid.
    const { info, findings, read } = await readAll(write(withNoteCodec(8)));
    expect(findings.map((f) => f.rule)).toEqual(['read-unsupported']);
    expect(findings[0].message).toMatch(/column "note" \(row group 0\) is compressed with codec number 8, which this reader does not know/);
    expect([info.entries, read, lib.opens, lib.reads.length]).toEqual([0, 0, 0, 0]);
  });

  it('an unknown encoding number: read-unsupported at open, the decoder never opens the file', async () => {
    const at = footerEnums(base).encodings.find((e) => e.group === 1 && e.column === 0)!.at;
    const { findings } = await readAll(write(withEnum(base, at, 10)));
    expect(findings.map((f) => [f.rule, f.message])).toEqual([['read-unsupported', 'column "id" (row group 1) declares encoding number 10, which this reader does not know; no rows are read']]);
    expect(lib.opens).toBe(0);
  });

  it('an LZO chunk: its row group is read-unsupported naming column and codec, without the decoder reading it; the next row group reads', async () => {
    // Before, the decoder was handed the chunk, trapped, and the rows were read-corrupt.
    const p = write(withNoteCodec(3));
    const { findings, read } = await readAll(p);
    expect(findings.map((f) => [f.rule, f.message, f.group])).toEqual([
      ['read-unsupported', 'row group 0 does not decode: column "note" is compressed with LZO, which this reader cannot decompress', 0],
    ]);
    expect(read).toBe(50);
    expect(lib.reads.every((g) => !g.includes(0))).toBe(true);
    // The column the LZO chunk does not hold still reads.
    lib.reads = [];
    const ids = await readAll(p, ['id']);
    expect(ids.findings).toEqual([]);
    expect(ids.rows.slice(0, 3).map((r) => r.value)).toEqual([{ id: 0 }, { id: 1 }, { id: 2 }]);
    expect(lib.reads.some((g) => g.includes(0))).toBe(true);
  });
});

describe('what the decoder refuses after our checks is damage, whatever its words', () => {
  const WORDS = ['Parquet error: not supported', 'unsupported page', 'not yet implemented: this column', 'the column is encrypted', 'over the budget', 'Unrecognized codec'];

  it.each(WORDS)('a read that throws "%s" is read-corrupt, quoting it', async (words) => {
    lib.readThrows = words;
    const { rows } = await readAll(write(base));
    const f = rows[0].findings;
    expect(f.map((x) => [x.rule, x.message])).toEqual([['read-corrupt', `row group 0 does not decode: ${words}`]]);
    expect(rows[50].findings.map((x) => x.rule)).toEqual(['read-corrupt']);
  });

  it('a footer the decoder refuses is read-footer-invalid, even when its words speak of encryption', async () => {
    lib.openThrows = 'Parquet error: encrypted footer not supported';
    const { findings } = await readAll(write(base));
    expect(findings.map((x) => [x.rule, x.message])).toEqual([['read-footer-invalid', 'the footer does not decode: Parquet error: encrypted footer not supported']]);
  });

  it('encryption is what the footer declares (parquet-testing encrypt_columns_plaintext_footer), whatever the decoder says', async () => {
    lib.openThrows = 'Parquet error: bad thrift';
    const p = join(requireTestdata('parquet'), 'encrypt_columns_plaintext_footer.parquet.encrypted');
    const s = new ParquetSource(p);
    const info = await s.open();
    await s.close();
    expect(info.findings.map((x) => x.rule)).toEqual(['read-unsupported']);
    expect(info.findings[0].message).toMatch(/^encrypted Parquet \(plaintext footer\)/);
  });
});
