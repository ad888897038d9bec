// JSON array source: element ranges, lines and columns against JSON.parse of the whole text
// (RFC 8259 as the reference: a well-formed file's elements must equal JSON.parse(file)), plus
// broken files giving findings. Demo-style records are our own bicycle-repair scenario.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { JsonArraySource } from '../../../../src/engine/sources/jsonArray.js';
import { requireTestdata } from './testdata.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-jsonarray-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function load(text: string | Uint8Array, chunkBytes = 7) {
  const p = join(dir, `f${Math.random().toString(36).slice(2)}.json`);
  writeFileSync(p, text);
  // A tiny chunk size makes every token cross a chunk boundary somewhere.
  const s = new JsonArraySource(p, { chunkBytes });
  const info = await s.index();
  const rows = await s.read(0, info.entries);
  await s.close();
  return { info, rows };
}

describe('well-formed arrays equal JSON.parse of the whole file (RFC 8259)', () => {
  it('nested records, strings with brackets and escapes, numbers, literals', async () => {
    const text = '[\n  {"messages": [{"role": "user", "content": "my brake [rear] squeals \\"a lot\\""}]},\n  {"a": {"b": [1, 2.5e3, -0]}},\n  "plain",\n  17, true, null\n]\n';
    const { info, rows } = await load(text);
    expect(info.findings).toEqual([]);
    expect(rows.map((r) => r.value)).toEqual(JSON.parse(text));
    expect(rows.map((r) => [r.line, r.column])).toEqual([[2, 3], [3, 3], [4, 3], [5, 3], [5, 7], [5, 13]]);
  });
  it('columns count UTF-16 units: an emoji before an element counts two', async () => {
    const { rows } = await load('[{"t":"🚲"}, 1]');
    expect(rows[1].column).toBe('[{"t":"🚲"}, '.length + 1);
  });
  it('an empty array has no entries and no findings', async () => {
    const { info } = await load(' [ ] ');
    expect([info.entries, info.findings.length]).toEqual([0, 0]);
  });
  it('every y_ file of JSONTestSuite (nst, ../shared/testdata/json-parsing) that is an array matches JSON.parse', async () => {
    const base = requireTestdata('json-parsing');
    const { readdirSync } = await import('node:fs');
    const files = readdirSync(base).filter((f) => f.startsWith('y_') && f.endsWith('.json'));
    let checked = 0;
    for (const f of files) {
      const bytes = readFileSync(join(base, f));
      const text = bytes.toString('utf8');
      const whole = JSON.parse(text);
      if (!Array.isArray(whole)) continue;
      const { info, rows } = await load(bytes, 3);
      expect(info.findings.filter((x) => x.severity === 'error'), f).toEqual([]);
      expect(rows.map((r) => r.value), f).toEqual(whole);
      checked++;
    }
    expect(checked).toBeGreaterThan(50);
  });
});

describe('broken input becomes findings, never a throw', () => {
  it('a malformed element is one finding at its line and column; the others still read', async () => {
    const { rows } = await load('[{"ok": 1},\n {"bad": tru},\n {"ok": 2}]');
    expect(rows.map((r) => r.value)).toEqual([{ ok: 1 }, undefined, { ok: 2 }]);
    // At the character that breaks it (where `tru` stands), as on a JSON Lines line.
    expect(rows[1].findings.map((f) => [f.rule, f.line, f.column])).toEqual([['array-element-syntax', 2, ' {"bad": tru},'.indexOf('tru') + 1]]);
    expect(rows[1].record).toBeNull();
  });
  it('a file cut inside an element: earlier elements read, the last is read-truncated, the array is unclosed', async () => {
    const { info, rows } = await load('[{"a": 1}, {"b": [1, 2');
    expect(rows[0].value).toEqual({ a: 1 });
    expect(rows[1].findings.map((f) => f.rule)).toEqual(['read-truncated']);
    expect(info.findings.map((f) => f.rule)).toEqual(['array-structure']);
  });
  it('not an array and trailing text are array-structure findings; an empty file is read-empty, as for every format', async () => {
    expect((await load('{"a": 1}')).info.findings.map((f) => f.rule)).toEqual(['array-structure']);
    expect((await load('[1] 2')).info.findings.map((f) => f.rule)).toEqual(['array-structure']);
    expect((await load('')).info.findings.map((f) => f.rule)).toEqual(['read-empty']);
  });
  it('invalid UTF-8 inside an element is a finding (RFC 8259 §8.1)', async () => {
    const { rows } = await load(Buffer.from([0x5b, 0x22, 0xff, 0x22, 0x5d]));
    expect(rows[0].findings.map((f) => f.rule)).toEqual(['array-element-syntax']);
  });
  it('an integer beyond ±(2^53−1) is flagged number-unsafe (RFC 8259 §6)', async () => {
    const { rows } = await load('[{"id": 9007199254740993}, {"id": 9007199254740991}]', 4);
    expect(rows[0].findings.map((f) => [f.rule, f.column])).toEqual([['number-unsafe', 9]]);
    expect(rows[1].findings).toEqual([]);
  });
  it('an element over the size limit is not parsed and says so', async () => {
    const p = join(dir, 'big.json');
    writeFileSync(p, `[${JSON.stringify({ text: 'x'.repeat(5000) })}, 2]`);
    const s = new JsonArraySource(p, { maxElementBytes: 1000 });
    await s.index();
    const rows = await s.read(0, 2);
    await s.close();
    expect(rows[0].value).toBeUndefined();
    expect(rows[0].findings[0].message).toMatch(/beyond the 1000-byte limit/);
    expect(rows[1].value).toBe(2);
  });
  it('a missing file rejects with an Error starting with the path', async () => {
    const p = join(dir, 'missing.json');
    await expect(new JsonArraySource(p).open()).rejects.toThrow(p);
  });
});
