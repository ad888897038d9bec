// Every format the sources read has its traits, and the webview fixtures send the same traits.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect, it } from 'vitest';
import { FORMATS } from '../../../../src/engine/sources/index';
import { KNOWN_FORMATS, traitsOf } from '../../../../src/engine/sources/traits';
import { projectRoot } from '../../helpers/build';

it('every format of the sources table has its traits, each consistent', () => {
  expect(new Set(KNOWN_FORMATS).size).toBe(FORMATS.length);
  for (const f of KNOWN_FORMATS) {
    const t = traitsOf(f);
    expect(t.entries).toBe(t.textual ? 'lines' : 'rows');
    if (t.oneLinePerEntry) expect(t.textual).toBe(true);
  }
});

it('the webview fixtures send the traits the host sends', async () => {
  const text = readFileSync(join(projectRoot, 'test/webview/fixtures.mjs'), 'utf8');
  const block = /const TRAITS = (\{[\s\S]*?\n\});/.exec(text)![1];
  const fixture = Function(`return (${block});`)() as Record<string, unknown>;
  // Each format the fixtures name sends the host's traits; a new format needs no fixture of its own,
  // but the fixtures cover a text format and a table format with groups.
  const named = Object.keys(fixture);
  for (const f of named) expect(fixture[f], f).toEqual(traitsOf(f));
  expect(named.some((f) => traitsOf(f).textual)).toBe(true);
  expect(named.some((f) => !traitsOf(f).textual && traitsOf(f).group !== null)).toBe(true);
});
