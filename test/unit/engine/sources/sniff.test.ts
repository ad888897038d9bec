// Formats known by their bytes: every golden file (apache/parquet-testing and apache/arrow-testing
// under ../shared/testdata, see SOURCES.md) reached through a symlink with a wrong or no ending opens
// with the reader its magic number names (Parquet `PAR1`; Arrow IPC file `ARROW1`; Arrow IPC stream
// continuation marker 0xFFFFFFFF, or a bare length before 0.15), and gives the same entries as
// through its own name. The files are linked, never copied; the folder is deleted after the tests.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { createSource, sniffFormat, UnsupportedFileError } from '../../../../src/engine/sources/index.js';
import { testdata } from '../tokens/corpus.js';

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shardwise-sniff-'));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

async function entries(p: string): Promise<{ format: string; entries: number; findings: string[] }> {
  const src = createSource(p);
  try {
    await src.open();
    const info = await src.index();
    return { format: info.format, entries: info.entries, findings: info.findings.map((f) => f.rule) };
  } finally {
    await src.close();
  }
}

let n = 0;
function linkAs(target: string, name: string): string {
  const p = path.join(dir, `${n++}-${name}`);
  fs.symlinkSync(path.resolve(target), p);
  return p;
}

const parquetDir = path.join(testdata, 'parquet');
const PARQUET = ['alltypes_plain.parquet', 'datapage_v2.snappy.parquet', 'nested_lists.snappy.parquet', 'lz4_raw_compressed.parquet', 'byte_stream_split.zstd.parquet'];
const integration = path.join(testdata, 'arrow/ipc-stream/integration');
const VERSIONS = fs.readdirSync(integration).filter((v) => !v.includes('bigendian') && fs.statSync(path.join(integration, v)).isDirectory());

describe('formats known by their bytes', () => {
  it.each(PARQUET)('Parquet %s opens as Parquet under a wrong name and under none', async (file) => {
    const want = await entries(path.join(parquetDir, file));
    expect(want.format).toBe('parquet');
    for (const name of ['shard.jsonl', 'train-00000-of-00004']) expect(await entries(linkAs(path.join(parquetDir, file), name))).toEqual(want);
  });

  it.each(VERSIONS)('Arrow integration files of %s: file and stream under wrong names', async (version) => {
    const folder = path.join(integration, version);
    const names = fs.readdirSync(folder);
    const stem = names.filter((f) => f.endsWith('.stream')).map((f) => f.slice(0, -'.stream'.length)).find((x) => names.includes(`${x}.arrow_file`));
    expect(stem).toBeDefined();
    const base = path.join(folder, stem!);
    const file = await entries(`${base}.arrow_file`);
    const stream = await entries(`${base}.stream`);
    expect(file.format).toBe('arrow-file');
    expect(stream.format).toBe('arrow-stream');
    expect(await entries(linkAs(`${base}.arrow_file`, 'data.parquet'))).toEqual(file);
    // A dataset library's cache writes streams named `.arrow`: read as a stream, with no finding.
    const asArrow = await entries(linkAs(`${base}.stream`, 'data-00000-of-00001.arrow'));
    expect(asArrow).toEqual(stream);
    expect(asArrow.findings).toEqual([]);
  });

  it('JSON Lines named .json reads as JSON Lines; a pretty-printed array stays an array', async () => {
    const lines = Array.from({ length: 25 }, (_, i) => JSON.stringify({ messages: [{ role: 'user', content: `q${i}` }] }));
    const jsonl = path.join(dir, 'chats.json');
    fs.writeFileSync(jsonl, lines.join('\n') + '\n');
    expect(await entries(jsonl)).toMatchObject({ format: 'jsonl', entries: 25 });
    const arrayLines = path.join(dir, 'rows.json');
    fs.writeFileSync(arrayLines, '[1, 2]\n[3, 4]\n[5]\n');
    expect(sniffFormat(arrayLines).format).toBe('jsonl');
    const pretty = path.join(dir, 'array.json');
    fs.writeFileSync(pretty, JSON.stringify(lines.map((l) => JSON.parse(l)), null, 2));
    expect(sniffFormat(pretty).format).toBe('json-array');
    const oneLine = path.join(dir, 'one-line.jsonl');
    fs.writeFileSync(oneLine, JSON.stringify([{ a: 1 }, { a: 2 }]));
    expect(sniffFormat(oneLine).format).toBe('json-array');
  });

  it('gzip (RFC 1952) JSON Lines with no ending reads, decompressed', async () => {
    const p = path.join(dir, 'train-00001-of-00004');
    fs.writeFileSync(p, gzipSync(Buffer.from('{"text":"a"}\n{"text":"b"}\n{"text":"c"}\n')));
    expect(sniffFormat(p)).toEqual({ format: 'jsonl', compression: 'gzip' });
    expect(await entries(p)).toMatchObject({ format: 'jsonl', entries: 3 });
  });

  it('a file none of the formats fits is refused, naming what was found', () => {
    const p = path.join(dir, 'picture.jsonl');
    fs.writeFileSync(p, Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]));
    expect(() => createSource(p)).toThrow(UnsupportedFileError);
    expect(() => createSource(p)).toThrow(/starts with bytes 89 50 4e 47/);
  });

  it('encrypted Parquet (PARE) opens to a clear read-unsupported finding, not a refusal', async () => {
    const r = await entries(path.join(parquetDir, 'uniform_encryption.parquet.encrypted'));
    expect(r.format).toBe('parquet');
    expect(r.findings).toEqual(['read-unsupported']);
  });
});
