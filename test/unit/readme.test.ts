// The README's rule table is the users' reference: it must name every rule the engine can raise.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect, it } from 'vitest';
import { allRules } from '../../src/engine/rules';
import { projectRoot } from './helpers/build';

it('the README lists every rule with its family and severity, and no rule that does not exist', () => {
  const readme = readFileSync(join(projectRoot, 'README.md'), 'utf8');
  const rows = new Map<string, string[]>();
  for (const m of readme.matchAll(/^\| `([a-z0-9-]+)` \| (\w+) \| (\w+) \|/gm)) rows.set(m[1], [m[2], m[3]]);
  const rules = new Map(allRules().map((r) => [r.id, r]));
  for (const r of rules.values()) expect(rows.get(r.id), r.id).toEqual([r.family, r.severity]);
  for (const id of rows.keys()) expect(rules.has(id), id).toBe(true);
});

it('every rule id the code raises is in the registry (an unregistered id would get no family or summary)', async () => {
  const { readdirSync, statSync } = await import('node:fs');
  const walk = (d: string): string[] => readdirSync(d).flatMap((n) => (statSync(join(d, n)).isDirectory() ? walk(join(d, n)) : n.endsWith('.ts') ? [join(d, n)] : []));
  const ids = new Set(allRules().map((r) => r.id));
  const raised = new Set<string>();
  for (const f of walk(join(projectRoot, 'src', 'engine'))) {
    const text = readFileSync(f, 'utf8');
    for (const m of text.matchAll(/\brule: '([a-z0-9-]+)'/g)) raised.add(m[1]);
    for (const m of text.matchAll(/\b(?:readFinding|jsonlRule|issue|finding)\(\s*'([a-z0-9-]+)'/g)) raised.add(m[1]);
  }
  expect(raised.size).toBeGreaterThan(20);
  for (const id of raised) expect(ids.has(id), id).toBe(true);
});
