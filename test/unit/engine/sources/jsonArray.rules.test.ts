// JSON rules belong to JSON, not to JSON Lines: an element of a JSON array gets the same duplicate-
// name and lone-surrogate findings as the same record on a JSON Lines line, each at its own line
// and column of the file (measured independently with String.indexOf over the file's text).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, expect, it } from 'vitest';
import { createSource } from '../../../../src/engine/sources/index';
import type { Entry } from '../../../../src/engine/sources/source';

const dir = mkdtempSync(join(tmpdir(), 'shardwise-array-rules-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function entriesOf(path: string): Promise<Entry[]> {
  const s = createSource(path);
  await s.open();
  const out: Entry[] = [];
  for await (const e of s.scan()) out.push(e);
  await s.close();
  return out;
}

function placeOf(text: string, at: number): { line: number; column: number } {
  const before = text.slice(0, at).split('\n');
  return { line: before.length, column: before[before.length - 1].length + 1 };
}

it('duplicate names and lone surrogates in a pretty-printed array, at their places', async () => {
  // Written by hand so the duplicate name and the escape stand where the test can find them.
  const text = '[\n  {\n    "id": "a",\n    "lang": "en",\n    "lang": "de"\n  },\n  {\n    "id": "b",\n    "text": "half \\ud83d here"\n  }\n]\n';
  const p = join(dir, 'pairs.json');
  writeFileSync(p, text);
  const [a, b] = await entriesOf(p);
  const dup = a.findings.find((f) => f.rule === 'key-duplicate');
  expect(dup).toMatchObject({ ...placeOf(text, text.lastIndexOf('"lang"') + 0), record: 0, pointer: '/lang', family: 'json' });
  const sur = b.findings.find((f) => f.rule === 'surrogate-unpaired');
  expect(sur).toMatchObject({ line: placeOf(text, text.indexOf('\\ud83d')).line, record: 1, pointer: '/text', family: 'encoding' });
  // The same records on JSON Lines lines get the same rules.
  const lines = join(dir, 'pairs.jsonl');
  writeFileSync(lines, '{"id": "a", "lang": "en", "lang": "de"}\n{"id": "b", "text": "half \\ud83d here"}\n');
  const [la, lb] = await entriesOf(lines);
  expect(la.findings.map((f) => f.rule)).toEqual(a.findings.map((f) => f.rule));
  expect(lb.findings.map((f) => f.rule)).toEqual(b.findings.map((f) => f.rule));
});

it('unsafe integers come from the same scanner too: the same findings as on JSON Lines lines, at their places in the file', async () => {
  // Each value at a place String.indexOf finds: an unsafe integer (RFC 8259 §6) among other notes.
  const text = '[\n  {"id": 9007199254740993, "k": 1, "k": 2},\n  {\n    "n": [1,\n      -9007199254740993],\n    "t": "\\udc00"\n  }\n]\n';
  const p = join(dir, 'numbers.json');
  writeFileSync(p, text);
  const [a, b] = await entriesOf(p);
  const lines = join(dir, 'numbers.jsonl');
  writeFileSync(lines, '{"id": 9007199254740993, "k": 1, "k": 2}\n{"n": [1, -9007199254740993], "t": "\\udc00"}\n');
  const [la, lb] = await entriesOf(lines);
  const what = (e: Entry) => e.findings.map((f) => [f.rule, f.message, f.pointer, f.record]);
  expect(what(a)).toEqual(what(la));
  expect(what(b)).toEqual(what(lb));
  expect(what(b).map((x) => x[0])).toEqual(['number-unsafe', 'surrogate-unpaired']);
  const at = (e: Entry, rule: string) => {
    const f = e.findings.find((x) => x.rule === rule)!;
    return { line: f.line, column: f.column };
  };
  expect(at(a, 'number-unsafe')).toEqual(placeOf(text, text.indexOf('9007199254740993')));
  expect(at(a, 'key-duplicate')).toEqual(placeOf(text, text.lastIndexOf('"k"')));
  expect(at(b, 'number-unsafe')).toEqual(placeOf(text, text.indexOf('-9007199254740993')));
  expect(at(b, 'surrogate-unpaired')).toEqual(placeOf(text, text.indexOf('\\udc00')));
});

it('an element the file cuts short keeps the scanner findings before the cut', async () => {
  const text = '[{"a": 1}, {"b": [1, 9007199254740993, 2';
  const p = join(dir, 'cut.json');
  writeFileSync(p, text);
  const [, cut] = await entriesOf(p);
  expect(cut.record).toBeNull();
  expect(cut.findings.map((f) => [f.rule, f.pointer])).toEqual([
    ['read-truncated', null],
    ['number-unsafe', '/b/1'],
  ]);
  expect(cut.findings[1]).toMatchObject(placeOf(text, text.indexOf('9007199254740993')));
});
