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
