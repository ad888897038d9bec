// The rules the JSONL source itself raises while reading lines.

import type { Family, RuleInfo, Severity } from '../findings.js';

export type JsonlRuleId =
  | 'json-syntax'
  | 'line-blank'
  | 'line-too-long'
  | 'record-not-object'
  | 'number-unsafe'
  | 'key-duplicate'
  | 'utf8-invalid'
  | 'bom-present'
  | 'surrogate-unpaired'
  | 'read-corrupt'
  | 'read-limit'
  | 'read-stalled'
  | 'read-empty';

export const JSONL_RULES: RuleInfo[] = [
  { id: 'json-syntax', family: 'json', severity: 'error', summary: 'The line is not exactly one JSON value.' },
  { id: 'line-blank', family: 'json', severity: 'warning', summary: 'An empty or white-space-only line holds no record.' },
  { id: 'line-too-long', family: 'json', severity: 'error', summary: 'The line is longer than the configured byte limit and was not read.' },
  { id: 'record-not-object', family: 'json', severity: 'error', summary: 'The record is a JSON value but not an object.' },
  { id: 'number-unsafe', family: 'json', severity: 'warning', summary: 'An integer beyond ±(2^53−1) loses precision in many readers.' },
  { id: 'key-duplicate', family: 'json', severity: 'warning', summary: 'The same property name appears twice in one object; readers keep only one.' },
  { id: 'utf8-invalid', family: 'encoding', severity: 'error', summary: 'The line holds bytes that are not valid UTF-8.' },
  { id: 'bom-present', family: 'encoding', severity: 'warning', summary: 'The line starts with a UTF-8 byte order mark, which shard text should not carry.' },
  { id: 'surrogate-unpaired', family: 'encoding', severity: 'warning', summary: 'A \\u escape encodes half of a surrogate pair with no other half.' },
  { id: 'read-corrupt', family: 'read', severity: 'error', summary: 'Bytes that do not decode (a corrupt compressed stream, page, batch or value); what came before is still read.' },
  { id: 'read-limit', family: 'read', severity: 'error', summary: 'A safety limit stopped the read (decompressed size against compressed size, free disk space, the memory cap of one reader); what came before is still read.' },
  { id: 'read-stalled', family: 'read', severity: 'error', summary: 'The read made no progress (no record, no byte) for the set time and was stopped; what came before is still checked.' },
  { id: 'read-empty', family: 'read', severity: 'error', summary: 'The file holds no bytes (or decompresses to none): a shard with no records, usually a failed write.' },
];

const BY_ID = new Map(JSONL_RULES.map((r) => [r.id, r]));

export function jsonlRule(id: JsonlRuleId): { family: Family; severity: Severity } {
  const r = BY_ID.get(id)!;
  return { family: r.family, severity: r.severity };
}
