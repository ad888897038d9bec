// Entry building for the text formats: one JSON Lines line, or one element of a JSON array, turned
// from its bytes into an Entry — UTF-8 decoding, a byte order mark, blank lines, the strict JSON
// scan and parse — with the source's own findings already located in the file. The JSON scanner's
// notes (duplicate names, unsafe integers, lone surrogates) become the same findings, at their own
// line and column, for every text format (`scanFindings`).

import type { Finding } from '../findings.js';
import { MAX_DEPTH, depthBeyond, parseLine, scanJson, type ScanNote } from '../json/scan.js';
import { TextLocator } from '../json/locate.js';
import { decodeLine, hasBom } from '../text/utf8.js';
import { readFinding } from './columnarRules.js';
import { jsonlRule, type JsonlRuleId } from './jsonlRules.js';
import type { Entry } from './source.js';

const strictDecoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
const lenientDecoder = new TextDecoder('utf-8', { fatal: false, ignoreBOM: true });

/** A byte count as messages show it. */
export function formatBytes(n: number): string {
  if (n < 1024) return `${n} bytes`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
  if (n < 1024 * 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MiB`;
  return `${(n / (1024 * 1024 * 1024)).toFixed(2)} GiB`;
}

function isBlank(text: string): boolean {
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c !== 0x20 && c !== 0x09 && c !== 0x0d && c !== 0x0a) return false;
  }
  return true;
}

function typeName(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'string') return 'a string';
  if (typeof v === 'number') return 'a number';
  if (typeof v === 'boolean') return 'a boolean';
  return typeof v;
}

/** Where a record's text starts in the file, and which entry and record it is. */
export interface TextPlace {
  entry: number;
  record: number | null;
  /** 1-based line and column of the text's first character. */
  line: number;
  column: number;
}

function makeFinding(rule: JsonlRuleId, message: string, at: TextPlace, column: number | null, pointer: string | null): Finding {
  const r = jsonlRule(rule);
  return { rule, family: r.family, severity: r.severity, message, record: at.record, line: at.line, column, pointer, entry: at.entry };
}

const NOTE_RULE: Record<ScanNote['kind'], JsonlRuleId> = {
  'duplicate-key': 'key-duplicate',
  'unsafe-number': 'number-unsafe',
  'lone-surrogate': 'surrogate-unpaired',
};

/**
 * The JSON scanner's notes on a record's text as findings, each at its line and column of the file
 * (`locator` is the text's, made once for all of the record's findings).
 */
export function scanFindings(notes: readonly ScanNote[], at: TextPlace, locator: TextLocator): Finding[] {
  return notes.map((note) => {
    const p = locator.placeAt(note.column, at.line, at.column);
    return makeFinding(NOTE_RULE[note.kind], note.detail, { ...at, line: p.line }, p.column, note.pointer);
  });
}

export type LineKind = 'record' | 'blank' | 'invalid';

/**
 * Whether a line's bytes hold a record, decided the same way `buildEntry` decides it but without
 * building findings: native JSON.parse first, the strict scan only where the depth cap could matter.
 */
export function classifyLine(bytes: Uint8Array): LineKind {
  let body = hasBom(bytes) ? bytes.subarray(3) : bytes;
  let end = body.length;
  while (end > 0 && (body[end - 1] === 0x20 || body[end - 1] === 0x09 || body[end - 1] === 0x0d)) end--;
  let start = 0;
  while (start < end && (body[start] === 0x20 || body[start] === 0x09 || body[start] === 0x0d)) start++;
  if (start === end) return 'blank';
  body = body.subarray(start, end);
  let text: string;
  try {
    text = strictDecoder.decode(body);
  } catch {
    text = lenientDecoder.decode(body);
  }
  try {
    JSON.parse(text);
  } catch {
    return 'invalid';
  }
  // Nesting beyond the cap needs more characters than the cap; only then is the scan needed.
  if (text.length > MAX_DEPTH && !scanJson(text).ok) return 'invalid';
  return 'record';
}

/**
 * Turns one JSON Lines line into an Entry. `record` is the record index the line gets if it holds
 * a value. `bytes` is null for a line over the limit, whose `length` alone is reported.
 */
export function buildEntry(entry: number, byteOffset: number, bytes: Uint8Array | null, length: number, record: number, maxLineBytes: number): Entry {
  const line = entry + 1;
  if (bytes === null) {
    const at = { entry, line, column: 1, record: null };
    return {
      entry, record: null, line, column: 1, byteOffset,
      findings: [makeFinding('line-too-long', `line is ${formatBytes(length)}, over the ${formatBytes(maxLineBytes)} limit; it was not read`, at, 1, null)],
    };
  }
  const decoded = decodeLine(bytes);
  const text = decoded.text;
  const early: Array<[JsonlRuleId, string, number | null]> = [];
  if (decoded.bom) early.push(['bom-present', 'line starts with a UTF-8 byte order mark (U+FEFF); it was skipped', 1]);
  if (decoded.invalid) {
    early.push(['utf8-invalid', `invalid UTF-8 at byte ${decoded.invalid.byteOffset} of the line; shown as U+FFFD`, decoded.invalid.column]);
  }
  const result: Entry = { entry, record: null, line, column: 1, byteOffset, text, findings: [] };
  if (isBlank(text)) {
    const at = { entry, line, column: 1, record: null };
    for (const [rule, msg, col] of early) result.findings.push(makeFinding(rule, msg, at, col, null));
    result.findings.push(makeFinding('line-blank', 'blank line: a JSON Lines line holds one JSON value', at, 1, null));
    result.blank = true;
    return result;
  }
  const parsed = parseLine(text);
  const isRecord = 'value' in parsed;
  const at = { entry, line, column: 1, record: isRecord ? record : null };
  for (const [rule, msg, col] of early) result.findings.push(makeFinding(rule, msg, at, col, null));
  if (!isRecord) {
    result.findings.push(makeFinding('json-syntax', `not a JSON value: ${parsed.error.message}`, at, parsed.error.column, null));
  }
  if (parsed.notes.length) result.findings.push(...scanFindings(parsed.notes, at, new TextLocator(text)));
  if (isRecord) {
    result.record = record;
    result.value = parsed.value;
    const v = parsed.value;
    if (v === null || typeof v !== 'object' || Array.isArray(v)) {
      let col = 1;
      while (col <= text.length && isBlank(text[col - 1])) col++;
      result.findings.push(makeFinding('record-not-object', `record is ${typeName(v)}, not a JSON object`, at, col, ''));
    }
  }
  return result;
}

/** Where an element of a JSON array lies in the (decompressed) file. */
export interface ElementSpan {
  offset: number;
  length: number;
  line: number;
  column: number;
  /** The file ends inside this element. */
  truncated?: boolean;
}

// As RFC 8259 §8.1 reads: a byte order mark opening an element's bytes is not part of its text.
const elementDecoder = new TextDecoder('utf-8', { fatal: true });
const elementLenientDecoder = new TextDecoder('utf-8', { fatal: false });

/**
 * Turns element `k` of a JSON array into an Entry: parsed alone (RFC 8259), so a broken element is
 * one finding, not a lost file. `bytes` is null for an element over `maxBytes`, which is not read.
 */
export function buildElementEntry(k: number, span: ElementSpan, bytes: Uint8Array | null, maxBytes: number): Entry {
  const place: TextPlace = { record: k, entry: k, line: span.line, column: span.column };
  const findings: Finding[] = [];
  const entry: Entry = { entry: k, record: k, line: span.line, column: span.column, byteOffset: span.offset, findings };
  /** The scanner's findings on text that is not read as a record: what it saw before it stopped. */
  const notesOf = (text: string) => {
    const { notes } = scanJson(text);
    if (notes.length) findings.push(...scanFindings(notes, place, new TextLocator(text)));
  };
  if (span.truncated) {
    findings.push(readFinding('read-truncated', 'the file ends inside this element', place));
    entry.record = null;
  }
  if (!bytes) {
    findings.push(readFinding('array-element-syntax', `the element is ${span.length} bytes, beyond the ${maxBytes}-byte limit; it is not parsed`, place));
    entry.record = null;
    return entry;
  }
  let text: string;
  try {
    text = elementDecoder.decode(bytes);
  } catch {
    findings.push(readFinding('array-element-syntax', 'the element is not valid UTF-8 (RFC 8259 §8.1)', place));
    entry.record = null;
    notesOf(elementLenientDecoder.decode(bytes));
    return entry;
  }
  entry.text = text;
  if (span.truncated) {
    notesOf(text);
    return entry;
  }
  // Checked before parsing: the same cap as a JSON Lines line, and no parser recursion to exhaust.
  const deep = depthBeyond(text, MAX_DEPTH);
  if (deep >= 0) {
    findings.push(readFinding('array-element-syntax', `the element nests deeper than ${MAX_DEPTH} levels (at character ${deep + 1} of the element); it is not read`, place));
    entry.record = null;
    notesOf(text);
    return entry;
  }
  // The strict scanner, as for a JSON Lines line.
  const parsed = parseLine(text);
  const locator = new TextLocator(text);
  if ('value' in parsed) entry.value = parsed.value;
  else {
    findings.push(readFinding('array-element-syntax', `the element is not valid JSON: ${parsed.error.message}`, { ...place, ...locator.placeAt(parsed.error.column, span.line, span.column) }));
    entry.record = null;
  }
  if (parsed.notes.length) findings.push(...scanFindings(parsed.notes, place, locator));
  return entry;
}
