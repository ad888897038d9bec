// A new context length needs no re-tokenising: the over-context findings and counts of a checked
// shard follow from the per-record token counts its tally keeps (each record's longest sequence,
// rendered where a chat template applies). No tokenizer is reached from here.

import type { CheckConfig } from '../engine/config.js';
import type { Finding } from '../engine/findings.js';
import { allRules } from '../engine/rules.js';
import { applyPolicy } from '../engine/policy.js';
import type { TallySnapshot } from '../engine/stats/tally.js';

export const OVER_CONTEXT_RULES = ['tokens-over-context', 'tokens-rendered-over-context'] as const;

const isOverContext = (f: Finding) => (OVER_CONTEXT_RULES as readonly string[]).includes(f.rule);

/** Records over `contextLength` by the kept counts that have no over-context finding yet (their places are needed). */
export function recordsNeedingPlaces(s: TallySnapshot, contextLength: number): number[] {
  const have = new Set(s.findings.filter(isOverContext).map((f) => f.record));
  const out: number[] = [];
  for (let r = 0; r < s.tokens.length; r++) if (s.tokens[r] > contextLength && !have.has(r)) out.push(r);
  return out;
}

/** Whether two configurations differ in the context length alone (what `recontext` can answer). */
export function onlyContextLengthChanged(before: CheckConfig, after: CheckConfig): boolean {
  if (before.contextLength === after.contextLength) return false;
  return JSON.stringify({ ...before, contextLength: 0, shardLayout: undefined }) === JSON.stringify({ ...after, contextLength: 0, shardLayout: undefined });
}

/** Where a record's finding is placed: its entry, and its line and column in text formats. */
export interface RecordPlace {
  entry: number;
  line: number | null;
  column: number | null;
}

/**
 * The tally of a checked shard under another context length: every over-context finding dropped
 * and made again, from the kept counts, for the records whose count passes `contextLength`.
 * `places` gives each such record's place (the caller reads it from the shard's index); `tokenizer`
 * is the label the messages name.
 */
export function recontext(
  s: TallySnapshot,
  contextLength: number,
  places: ReadonlyMap<number, RecordPlace>,
  opts: { tokenizer: string; rendered: boolean; rules?: CheckConfig['rules'] },
): TallySnapshot | null {
  // Findings past the tally's cap were counted but not kept: then only a new check can say which go.
  if (s.findings.length !== s.totalFindings) return null;
  const old = new Map<number, Finding>();
  const kept: Finding[] = [];
  for (const f of s.findings) {
    if (!isOverContext(f)) kept.push(f);
    else if (f.record !== null) old.set(f.record, f);
  }
  const byRule = new Map(s.byRule);
  const bySeverity = { ...s.bySeverity };
  let totalFindings = s.totalFindings;
  for (const rule of OVER_CONTEXT_RULES) {
    const n = byRule.get(rule) ?? 0;
    byRule.delete(rule);
    totalFindings -= n;
  }
  for (const f of s.findings) if (isOverContext(f)) bySeverity[f.severity]--;

  const rule = opts.rendered ? 'tokens-rendered-over-context' : 'tokens-over-context';
  const info = allRules().find((r) => r.id === rule);
  const made: Finding[] = [];
  for (let record = 0; record < s.tokens.length; record++) {
    const n = s.tokens[record];
    if (n < 0 || n <= contextLength) continue;
    const was = old.get(record);
    const at = places.get(record) ?? (was && was.entry !== null ? { entry: was.entry, line: was.line, column: was.column } : null);
    // A record over the new length whose place is unknown: only a new check can file it.
    if (!at) return null;
    // The earlier message names the longest sequence where the record has several; only the length changes.
    const message = was
      ? was.message.replace(/more than the context length of \d+\.$/, `more than the context length of ${contextLength}.`)
      : opts.rendered
        ? `Rendered with the chat template, the record has ${n} tokens (${opts.tokenizer}), more than the context length of ${contextLength}.`
        : `The record has ${n} tokens (${opts.tokenizer}), more than the context length of ${contextLength}.`;
    const f = applyPolicy(
      { rule: was?.rule ?? rule, family: info?.family ?? 'tokens', severity: info?.severity ?? 'warning', message, record, line: at.line, column: at.column, pointer: '', entry: at.entry, ...(was?.group !== undefined ? { group: was.group, rowInGroup: was.rowInGroup } : {}) },
      opts.rules,
    );
    if (f) made.push(f);
  }
  for (const f of made) {
    bySeverity[f.severity]++;
    byRule.set(f.rule, (byRule.get(f.rule) ?? 0) + 1);
  }
  totalFindings += made.length;
  return { ...s, findings: [...kept, ...made], totalFindings, bySeverity, byRule: [...byRule.entries()] };
}
