// Every rule the product knows, for the README table, hovers and the CLI's rule lookups.

import type { RuleInfo } from './findings.js';
import { ALL_CHECKS } from './checks/index.js';
import { JSONL_RULES } from './sources/jsonlRules.js';
import { COLUMNAR_RULES, JSON_ARRAY_RULES } from './sources/columnarRules.js';

/** Rules raised by the analysis itself rather than by one source or check. */
export const ANALYSIS_RULES: RuleInfo[] = [
  { id: 'read-failed', family: 'read', severity: 'error', summary: 'The file, or a part of it, could not be read; what could be read is still checked.' },
  { id: 'check-failed', family: 'read', severity: 'error', summary: 'A check could not run on a record (an internal error, reported rather than hidden).' },
];

let cache: Map<string, RuleInfo> | null = null;

export function allRules(): RuleInfo[] {
  return [...ANALYSIS_RULES, ...JSONL_RULES, ...COLUMNAR_RULES, ...JSON_ARRAY_RULES, ...ALL_CHECKS.flatMap((c) => c.rules)];
}

export function ruleInfo(id: string): RuleInfo | undefined {
  if (!cache) {
    cache = new Map();
    for (const r of allRules()) if (!cache.has(r.id)) cache.set(r.id, r);
  }
  return cache.get(id);
}
