// The formats' registry (formats.ts): a format is one file in sources/formats/ plus its line in
// FORMATS; these checks catch a missed step — a file with no line, a format the sniffer can never
// pick, a reader that names another format, a format with no sample here. The binary samples are
// golden files (../shared/testdata: apache/parquet-testing, apache/arrow-testing; SOURCES.md),
// linked under a name with no ending so only the bytes decide.
import { mkdtempSync, readdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createSource, FORMATS, isShardFile, sniffFormat } from '../../../../src/engine/sources/index.js';
import { traitsOf } from '../../../../src/engine/sources/traits.js';
import { projectRoot } from '../../helpers/build';
import { requireTestdata } from './testdata.js';

const tmp = mkdtempSync(join(tmpdir(), 'sw-formats-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

function linked(target: string, name: string): string {
  const p = join(tmp, name);
  symlinkSync(target, p);
  return p;
}
function written(name: string, text: string): string {
  const p = join(tmp, name);
  writeFileSync(p, text);
  return p;
}

const arrow = requireTestdata('arrow/ipc-stream/integration/1.0.0-littleendian');
/** One sample per format, with the number of entries it holds. */
const SAMPLES: Record<string, () => { path: string; entries: number }> = {
  jsonl: () => ({ path: written('lines', '{"a":1}\n{"a":2}\n{"a":3}\n'), entries: 3 }),
  'json-array': () => ({ path: written('array', '[\n  {"a": 1},\n  {"a": 2}\n]\n'), entries: 2 }),
  // parquet-testing's alltypes_plain.parquet holds 8 rows (its README).
  parquet: () => ({ path: linked(join(requireTestdata('parquet'), 'alltypes_plain.parquet'), 'table'), entries: 8 }),
  'arrow-file': () => ({ path: linked(join(arrow, 'generated_primitive.arrow_file'), 'ipcfile'), entries: -1 }),
  'arrow-stream': () => ({ path: linked(join(arrow, 'generated_primitive.stream'), 'ipcstream'), entries: -1 }),
};

describe('the formats registry', () => {
  it('names are unique, and every file in sources/formats/ has its line in FORMATS', () => {
    const names = FORMATS.map((f) => f.format);
    expect(new Set(names).size).toBe(names.length);
    const files = readdirSync(join(projectRoot, 'src/engine/sources/formats')).filter((f) => f.endsWith('.ts'));
    expect(files.length, `files: ${files.join(', ')}`).toBe(FORMATS.length);
  });

  it('every format can be recognised: by a sign at the start of its bytes, or by the JSON text shape it reads', () => {
    for (const f of FORMATS) expect(Boolean(f.signs?.start) || f.jsonText !== undefined, f.format).toBe(true);
    // Each JSON text shape is read by exactly one format.
    for (const shape of ['lines', 'array']) expect(FORMATS.filter((f) => f.jsonText === shape).length, shape).toBe(1);
  });

  it('every format has a sample here, recognised from its bytes alone and read by a reader of that format', async () => {
    expect(Object.keys(SAMPLES).sort()).toEqual(FORMATS.map((f) => f.format).sort());
    for (const f of FORMATS) {
      const { path, entries } = SAMPLES[f.format]!();
      expect(sniffFormat(path).format, f.format).toBe(f.format);
      expect(isShardFile(path), f.format).toBe(true);
      const source = createSource(path);
      try {
        expect(source.format).toBe(f.format);
        await source.open();
        const info = await source.index();
        expect(info.findings.filter((x) => x.severity === 'error'), f.format).toEqual([]);
        if (entries >= 0) expect(info.entries, f.format).toBe(entries);
        else expect(info.entries, f.format).toBeGreaterThan(0);
        expect(traitsOf(f.format)).toBe(f.traits);
      } finally {
        await source.close();
      }
    }
  });

  it('a pretty-printed JSON document is not taken for a shard in a folder walk, plain or gzip-compressed', async () => {
    const { gzipSync } = await import('node:zlib');
    const doc = '{\n  "name": "bike-shop",\n  "splits": ["train"]\n}\n';
    expect(isShardFile(written('settings.jsonl', doc))).toBe(false);
    const gz = join(tmp, 'settings.jsonl.gz');
    writeFileSync(gz, gzipSync(Buffer.from(doc)));
    expect(isShardFile(gz)).toBe(false);
    expect(isShardFile(join(tmp, 'missing.jsonl'))).toBe(false);
  });
});
