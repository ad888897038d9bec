// The rule registry: every rule the product knows, declared once (id, family, default severity,
// one-line summary). `shardwise rules`, the SARIF printer and the README's table read this list.

import type { RuleInfo } from './findings.js';
import { ANALYSIS_RULES } from './analyze.js';
import { ALL_CHECKS } from './checks/index.js';
import { JSONL_RULES } from './sources/jsonlRules.js';
import { COLUMNAR_RULES, JSON_ARRAY_RULES } from './sources/columnarRules.js';

/** Every rule, each id declared once (a second declaration of an id is an error, not a shadow). */
export function allRules(): RuleInfo[] {
  const all = [...ANALYSIS_RULES, ...JSONL_RULES, ...COLUMNAR_RULES, ...JSON_ARRAY_RULES, ...ALL_CHECKS.flatMap((c) => c.rules)];
  const seen = new Set<string>();
  for (const r of all) {
    if (seen.has(r.id)) throw new Error(`rule "${r.id}" is declared twice`);
    seen.add(r.id);
  }
  return all;
}
