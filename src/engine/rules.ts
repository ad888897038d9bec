// Every rule the product knows, for the README's rule table.

import type { RuleInfo } from './findings.js';
import { ANALYSIS_RULES } from './analyze.js';
import { ALL_CHECKS } from './checks/index.js';
import { JSONL_RULES } from './sources/jsonlRules.js';
import { COLUMNAR_RULES, JSON_ARRAY_RULES } from './sources/columnarRules.js';

export function allRules(): RuleInfo[] {
  return [...ANALYSIS_RULES, ...JSONL_RULES, ...COLUMNAR_RULES, ...JSON_ARRAY_RULES, ...ALL_CHECKS.flatMap((c) => c.rules)];
}
