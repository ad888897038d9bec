// Rules the columnar and JSON-array sources raise while reading, and one way to build their findings.

import type { Family, Finding, RuleInfo, Severity } from '../findings.js';
import { JSONL_RULES } from './jsonlRules.js';

export const COLUMNAR_RULES: RuleInfo[] = [
  { id: 'read-footer-invalid', family: 'read', severity: 'error', summary: 'The file has no valid footer or header, so its layout cannot be known.' },
  { id: 'read-truncated', family: 'read', severity: 'error', summary: 'A message, page or record batch is cut short.' },
  { id: 'read-unsupported', family: 'read', severity: 'error', summary: 'A type, codec, encryption or version the reader cannot read.' },
  { id: 'read-stream-unterminated', family: 'read', severity: 'warning', summary: 'The stream ends between messages without its end-of-stream marker (a writer may still be running).' },
];

/** Rules only the JSON-array source raises. */
export const JSON_ARRAY_RULES: RuleInfo[] = [
  { id: 'array-structure', family: 'json', severity: 'error', summary: 'The file is not one JSON array of records, or the array is broken between elements.' },
  { id: 'array-element-syntax', family: 'json', severity: 'error', summary: 'An element of the array is not valid JSON (RFC 8259).' },
];

// read-corrupt and number-unsafe are declared once, with the JSON Lines rules, and raised by every reader.
const ALL = new Map([...JSONL_RULES, ...COLUMNAR_RULES, ...JSON_ARRAY_RULES].map((r) => [r.id, r]));

export interface FindingPlace {
  record?: number | null;
  entry?: number | null;
  line?: number | null;
  column?: number | null;
  pointer?: string | null;
  group?: number;
  rowInGroup?: number;
}

/** A finding of one of our rules; severity and family come from the rule unless overridden. */
export function readFinding(rule: string, message: string, place: FindingPlace = {}, severity?: Severity): Finding {
  const info = ALL.get(rule);
  const family: Family = info?.family ?? 'read';
  const f: Finding = {
    rule,
    family,
    severity: severity ?? info?.severity ?? 'error',
    message,
    record: place.record ?? null,
    line: place.line ?? null,
    column: place.column ?? null,
    pointer: place.pointer ?? null,
    entry: place.entry ?? null,
  };
  if (place.group !== undefined) f.group = place.group;
  if (place.rowInGroup !== undefined) f.rowInGroup = place.rowInGroup;
  return f;
}

/** What a library's own slip (a TypeError deep inside a decoder) says to a person instead of its internal text. */
export const INCONSISTENT_DATA = 'lengths, offsets or values inside it contradict each other';

// Messages of the JavaScript engine and of WebAssembly traps, never meant for a person.
const INTERNAL = /Cannot read propert|Cannot set propert|is not a function|is not iterable|is not a constructor|Invalid typed array length|Invalid array length|out of bounds|outside the bounds|Maximum call stack|\bundefined\b|unreachable|memory access|RuntimeError|Start offset|byte length of|must be a multiple/i;

/**
 * The message of anything thrown, in one line, never longer than a screen row or two. A library's
 * internal slip (a TypeError, a RangeError, a trap) becomes INCONSISTENT_DATA: callers name the
 * column, batch or offset around it.
 */
export function errorText(e: unknown): string {
  if (e instanceof TypeError || e instanceof RangeError || e instanceof ReferenceError) return INCONSISTENT_DATA;
  const raw = e instanceof Error ? e.message : typeof e === 'string' ? e : String(e);
  if (INTERNAL.test(raw)) return INCONSISTENT_DATA;
  const one = raw.replace(/\s+/g, ' ').trim();
  return one.length > 300 ? `${one.slice(0, 300)}…` : one || 'unknown error';
}
