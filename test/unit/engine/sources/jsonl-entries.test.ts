// Entries of text lines: whether a line is blank, holds no record or holds one is on the entry
// itself, and the analysis takes it from there — not from a rule id. The expectations come from a
// naive reference in the test: split the bytes on 0x0A, trim JSON white space, JSON.parse the rest.
import { afterAll, expect, it } from 'vitest';
import { analyzeEntry } from '../../../../src/engine/analyze.js';
import { withDefaults } from '../../../../src/engine/config.js';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import type { Entry } from '../../../../src/engine/sources/source.js';
import { buildEntry } from '../../../../src/engine/sources/textEntry.js';
import { tempDir, writeShard } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

const LINES = ['{"a":1}', '', '   ', '\t\r', '\ufeff', '\ufeff  ', '{"a":', '[1]', '{"b":2}', 'x', ' {"c":3} '];

function reference(line: string): 'record' | 'blank' | 'invalid' {
  const body = line.replace(/^\ufeff/, '');
  if (/^[ \t\r]*$/.test(body)) return 'blank';
  try {
    JSON.parse(body);
    return 'record';
  } catch {
    return 'invalid';
  }
}

it('a blank line says so on its entry; no other line does', async () => {
  const p = writeShard(tmp.dir, 'blanks.jsonl', LINES.join('\n') + '\n');
  const s = new JsonlSource(p);
  const entries: Entry[] = [];
  for await (const e of s.scan()) entries.push(e);
  await s.close();
  expect(entries.map((e) => (e.blank ? 'blank' : e.value !== undefined ? 'record' : 'invalid'))).toEqual(LINES.map(reference));
  // A line over the limit is not read, so it is not blank either.
  expect(buildEntry(0, 0, null, 500, 0, 100).blank).toBeUndefined();
});

it('the analysis counts blank lines from the entry, whatever findings it carries or the project turns off', async () => {
  const p = writeShard(tmp.dir, 'kinds.jsonl', LINES.join('\n') + '\n');
  const s = new JsonlSource(p);
  const off = withDefaults({ rules: { 'line-blank': 'off' } });
  const kinds: string[] = [];
  for await (const e of s.scan()) kinds.push(analyzeEntry(e, [], off).kind);
  await s.close();
  expect(kinds).toEqual(LINES.map(reference));
  // An entry holding no record that is not marked blank is not blank, whatever rule its finding has.
  const unmarked: Entry = {
    entry: 0, record: null, line: 1, column: 1, text: '',
    findings: [{ rule: 'line-blank', family: 'json', severity: 'warning', message: 'm', record: null, line: 1, column: 1, pointer: null, entry: 0 }],
  };
  expect(analyzeEntry(unmarked, [], withDefaults()).kind).toBe('invalid');
  expect(analyzeEntry({ ...unmarked, findings: [], blank: true }, [], withDefaults()).kind).toBe('blank');
});
