// What a project decides about rules: a severity per rule id, or "off". Applied once, where
// findings are made, so the editor, the CLI and every report show the same verdicts.

import type { Finding, Severity } from './findings.js';

export type RuleLevel = Severity | 'off';
export const RULE_LEVELS: readonly RuleLevel[] = ['error', 'warning', 'info', 'off'];

/** Rule id → level; rules not named keep their default severity. */
export type RulePolicy = Readonly<Record<string, RuleLevel>>;

/** The finding as the policy has it, or null when its rule is off. */
export function applyPolicy(f: Finding, policy: RulePolicy | undefined): Finding | null {
  if (!policy) return f;
  const level = policy[f.rule];
  if (level === undefined) return f;
  if (level === 'off') return null;
  return level === f.severity ? f : { ...f, severity: level };
}

export function applyPolicyAll(findings: Finding[], policy: RulePolicy | undefined): Finding[] {
  if (!policy || Object.keys(policy).length === 0) return findings;
  const out: Finding[] = [];
  for (const f of findings) {
    const g = applyPolicy(f, policy);
    if (g) out.push(g);
  }
  return out;
}

const SEVERITY_ORDER: Record<Severity, number> = { error: 2, warning: 1, info: 0 };

/** Whether a finding of this severity reaches a fail level (`never` fails on nothing). */
export function reaches(severity: Severity, failOn: Severity | 'never'): boolean {
  if (failOn === 'never') return false;
  return SEVERITY_ORDER[severity] >= SEVERITY_ORDER[failOn];
}

/**
 * A 64-bit hash of a string as 16 hex digits: two 32-bit FNV-1a lanes over UTF-16 code units with
 * different offset bases (FNV-1a: common practice; not cryptographic — a stable identity only).
 */
export function hash64(text: string): string {
  let a = 0x811c9dc5;
  let b = 0x050c5d1f;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    a = Math.imul(a ^ c, 0x01000193);
    b = Math.imul(b ^ (c & 0xff), 0x01000193);
    b = Math.imul(b ^ (c >>> 8), 0x01000193);
  }
  // Final avalanche (murmur3's fmix32, common practice) so nearby inputs spread over every bit.
  return fmix(a).toString(16).padStart(8, '0') + fmix(b ^ a).toString(16).padStart(8, '0');
}

function fmix(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** Fields that name a record in the trade's data sets, tried in order (common practice). */
export const ID_FIELDS: readonly string[] = ['id', '_id', 'uuid', 'example_id', 'sample_id', 'conversation_id', 'prompt_id'];

/**
 * A record's identity that survives lines moving: its id field where it has one, else a hash of
 * its content. Used to match findings against a baseline.
 */
export function recordKey(value: unknown, text: string | undefined): string {
  if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
    const o = value as Record<string, unknown>;
    for (const k of ID_FIELDS) {
      const v = o[k];
      if (typeof v === 'string' && v !== '') return `${k}=${v}`;
      if (typeof v === 'number' && Number.isFinite(v)) return `${k}=${v}`;
    }
  }
  return `#${hash64(text ?? stableJson(value))}`;
}

/** JSON with object keys in order, so the same record gives the same text whatever wrote it. */
export function stableJson(value: unknown): string {
  if (typeof value === 'bigint') return value.toString();
  if (value === null || typeof value !== 'object') return JSON.stringify(value) ?? 'null';
  if (Array.isArray(value)) return `[${value.map(stableJson).join(',')}]`;
  if (value instanceof Uint8Array) {
    let hex = '';
    for (const b of value) hex += b.toString(16).padStart(2, '0');
    return `"bytes:${hex}"`;
  }
  const o = value as Record<string, unknown>;
  return `{${Object.keys(o)
    .sort()
    .map((k) => `${JSON.stringify(k)}:${stableJson(o[k])}`)
    .join(',')}}`;
}
