// The registration lines: a check, a layout, a tokenizer kind or an output is one file plus one
// line in its list (DEVELOPERS.md, "Adding things"). These checks fail when a file is added and its
// line forgotten: every module of the folder that exports such a thing is imported and looked at.
// (Formats: test/unit/engine/sources/formats.test.ts.)
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ALL_CHECKS } from '../../src/engine/checks/index.js';
import { LAYOUTS } from '../../src/engine/layouts/index.js';
import { TOKENIZER_KINDS } from '../../src/engine/tokens/kinds.js';
import { PRINTERS } from '../../src/cli/printers/index.js';
import { projectRoot } from './helpers/build';

/** Every value exported by the folder's modules (except `skip`) that `is` recognises. */
async function exported<T>(folder: string, is: (v: unknown) => v is T, skip: string[] = ['index.ts']): Promise<Array<{ file: string; name: string; value: T }>> {
  const out: Array<{ file: string; name: string; value: T }> = [];
  const dir = join(projectRoot, folder);
  for (const file of readdirSync(dir).filter((f) => f.endsWith('.ts') && !skip.includes(f))) {
    const mod = (await import(join(dir, file))) as Record<string, unknown>;
    for (const [name, value] of Object.entries(mod)) if (is(value)) out.push({ file, name, value });
  }
  return out;
}

const obj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null;

describe('every registrable thing is registered', () => {
  it('checks: each exported Check in src/engine/checks/ is in ALL_CHECKS', async () => {
    const found = await exported('src/engine/checks', (v): v is (typeof ALL_CHECKS)[number] => obj(v) && typeof v.checkRecord === 'function' && Array.isArray(v.rules));
    expect(found.length).toBeGreaterThan(0);
    for (const f of found) expect(ALL_CHECKS, `${f.file}: ${f.name}`).toContain(f.value);
    expect(found.length).toBe(ALL_CHECKS.length);
  });

  it('layouts: each exported Layout in src/engine/layouts/ is in LAYOUTS', async () => {
    const found = await exported('src/engine/layouts', (v): v is (typeof LAYOUTS)[number] => obj(v) && typeof v.recognise === 'function' && typeof v.read === 'function' && typeof v.id === 'string');
    expect(found.length).toBeGreaterThan(0);
    for (const f of found) expect(LAYOUTS, `${f.file}: ${f.name}`).toContain(f.value);
    expect(new Set(found.map((f) => f.value)).size).toBe(LAYOUTS.length);
  });

  it('tokenizer kinds: each exported TokenizerKind in src/engine/tokens/ is in TOKENIZER_KINDS', async () => {
    const found = await exported('src/engine/tokens', (v): v is (typeof TOKENIZER_KINDS)[number] => obj(v) && typeof v.claims === 'function' && typeof v.load === 'function', ['index.ts', 'kinds.ts']);
    expect(found.length).toBeGreaterThan(0);
    for (const f of found) expect(TOKENIZER_KINDS, `${f.file}: ${f.name}`).toContain(f.value);
    expect(found.length).toBe(TOKENIZER_KINDS.length);
  });

  it('outputs: each printer file in src/cli/printers/ backs the --format name of its own name', async () => {
    const files = readdirSync(join(projectRoot, 'src/cli/printers')).filter((f) => f.endsWith('.ts') && f !== 'index.ts');
    expect(Object.keys(PRINTERS).sort()).toEqual(files.map((f) => f.replace(/\.ts$/, '')).sort());
    for (const [name, make] of Object.entries(PRINTERS)) expect(typeof make({ rules: [], version: 'test' }).print, name).toBe('function');
  });
});
