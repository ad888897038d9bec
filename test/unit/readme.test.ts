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
