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

/**
 * The message of anything thrown, in one line, never longer than a screen row or two. A library's
 * internal slip — the JavaScript engine's own errors (a TypeError, a RangeError, a ReferenceError)
 * or a WebAssembly trap — becomes INCONSISTENT_DATA, told by its class: its text was never meant
 * for a person. Callers name the column, batch or offset around it.
 */
export function errorText(e: unknown): string {
  if (isInternalSlip(e)) return INCONSISTENT_DATA;
  const raw = e instanceof Error ? e.message : typeof e === 'string' ? e : String(e);
  const one = raw.replace(/\s+/g, ' ').trim();
  return one.length > 300 ? `${one.slice(0, 300)}…` : one || 'unknown error';
}

// The engine room has no DOM or WebAssembly typings; Node provides the class.
declare const WebAssembly: { RuntimeError: new (message?: string) => Error };

/** The JavaScript engine's own errors and WebAssembly traps, here or as the cause of a wrapper. */
function isInternalSlip(e: unknown, depth = 0): boolean {
  if (e instanceof TypeError || e instanceof RangeError || e instanceof ReferenceError) return true;
  if (e instanceof WebAssembly.RuntimeError) return true;
  return depth < 3 && e instanceof Error && e.cause !== undefined && isInternalSlip(e.cause, depth + 1);
}
