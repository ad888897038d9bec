// Validation: a strict RFC 8259 scanner that knows where things are — the column of the first error,
// and notes (duplicate names, unsafe integers, lone surrogates) with the JSON Pointer of the value
// concerned. Every text format's records pass through it (see sources/textEntry.ts). Iterative
// with an explicit stack, so nesting depth cannot overflow the call stack. Finding where a pointer's
// value sits in a record's text is locate.ts.

import { pointerToken } from '../findings.js';

export type ScanNoteKind = 'duplicate-key' | 'unsafe-number' | 'lone-surrogate';

export interface ScanNote {
  kind: ScanNoteKind;
  /** RFC 6901 pointer of the value concerned (for a duplicate name: the later member). */
  pointer: string;
  /** 1-based column in UTF-16 code units of the scanned text. */
  column: number;
  detail: string;
}

export type ScanResult =
  | { ok: true; notes: ScanNote[] }
  | { ok: false; column: number; message: string; notes: ScanNote[] };

export type ParseLineResult = { value: unknown; notes: ScanNote[] } | { error: { column: number; message: string }; notes: ScanNote[] };

/** Deeper nesting is reported as an error rather than risking the reader's stack. */
export const MAX_DEPTH = 10000;

const MAX_SAFE = Number.MAX_SAFE_INTEGER;

class ScanError {
  constructor(
    readonly index: number,
    readonly message: string,
  ) {}
}

function isWs(c: number): boolean {
  return c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09;
}

function isDigit(c: number): boolean {
  return c >= 0x30 && c <= 0x39;
}

function hexValue(c: number): number {
  if (c >= 0x30 && c <= 0x39) return c - 0x30;
  if (c >= 0x41 && c <= 0x46) return c - 0x37;
  if (c >= 0x61 && c <= 0x66) return c - 0x57;
  return -1;
}

/** A character as a message shows it: printable ASCII quoted, anything else as U+XXXX. */
export function describeChar(text: string, i: number): string {
  const cp = text.codePointAt(i);
  if (cp === undefined) return 'end of line';
  if (cp > 0x20 && cp < 0x7f) return `'${String.fromCharCode(cp)}'`;
  return `U+${cp.toString(16).toUpperCase().padStart(4, '0')}`;
}

function shorten(s: string, max = 40): string {
  return s.length <= max ? s : `${s.slice(0, max)}… (${s.length} characters)`;
}

/** Reads four hex digits at i, or -1. */
function hex4(text: string, i: number): number {
  if (i + 4 > text.length) return -1;
  let v = 0;
  for (let k = 0; k < 4; k++) {
    const h = hexValue(text.charCodeAt(i + k));
    if (h < 0) return -1;
    v = v * 16 + h;
  }
  return v;
}

/** Characters a string may hold unescaped, up to the next quote, backslash or control character. */
const PLAIN_RUN = /[^"\\\u0000-\u001f]*/y;

const ARRAY = 0;
const OBJECT = 1;

/** Checks that `text` is exactly one JSON value (RFC 8259), surrounded only by JSON whitespace. */
export function scanJson(text: string): ScanResult {
  const notes: ScanNote[] = [];
  const n = text.length;
  // One slot per open container.
  const kinds: number[] = [];
  const keys: string[] = [];
  const indexes: number[] = [];
  const seen: Set<string>[] = [];
  let depth = 0;

  const pointerAt = (extra?: string): string => {
    let p = '';
    for (let d = 0; d < depth; d++) p += '/' + (kinds[d] === ARRAY ? String(indexes[d]) : pointerToken(keys[d]));
    if (extra !== undefined) p += '/' + pointerToken(extra);
    return p;
  };

  // Scans a string starting at the quote at `start`; returns the index after the closing quote.
  // Lone surrogate escapes are collected into `lone` (indexes of the backslash).
  let lone: number[] = [];
  let hadEscape = false;
  const scanString = (start: number): number => {
    let i = start + 1;
    hadEscape = false;
    for (;;) {
      // Jump over the plain run in one native regex step; long strings dominate real records.
      PLAIN_RUN.lastIndex = i;
      PLAIN_RUN.test(text);
      i = PLAIN_RUN.lastIndex;
      if (i >= n) throw new ScanError(start, 'unterminated string');
      const c = text.charCodeAt(i);
      if (c === 0x22) return i + 1;
      if (c < 0x20) throw new ScanError(i, `control character ${describeChar(text, i)} inside a string (it must be escaped)`);
      if (c !== 0x5c) {
        i++;
        continue;
      }
      hadEscape = true;
      if (i + 1 >= n) throw new ScanError(start, 'unterminated string');
      const e = text.charCodeAt(i + 1);
      switch (e) {
        case 0x22: case 0x5c: case 0x2f: case 0x62: case 0x66: case 0x6e: case 0x72: case 0x74:
          i += 2;
          break;
        case 0x75: {
          const u = hex4(text, i + 2);
          if (u < 0) throw new ScanError(i, 'invalid \\u escape: expected four hex digits');
          if (u >= 0xd800 && u <= 0xdbff) {
            const follows = text.charCodeAt(i + 6) === 0x5c && text.charCodeAt(i + 7) === 0x75 ? hex4(text, i + 8) : -1;
            if (follows >= 0xdc00 && follows <= 0xdfff) {
              i += 12;
              break;
            }
            lone.push(i);
          } else if (u >= 0xdc00 && u <= 0xdfff) {
            lone.push(i);
          }
          i += 6;
          break;
        }
        default:
          throw new ScanError(i, `invalid escape '\\${i + 1 < n ? text[i + 1] : ''}' in a string`);
      }
    }
  };

  const noteLone = (pointer: string) => {
    for (const at of lone) {
      notes.push({
        kind: 'lone-surrogate',
        pointer,
        column: at + 1,
        detail: `escape ${text.slice(at, at + 6)} is half of a surrogate pair with no other half`,
      });
    }
    lone = [];
  };

  const skipWs = (i: number): number => {
    while (i < n && isWs(text.charCodeAt(i))) i++;
    return i;
  };

  // Reads `"name" :` at i (whitespace already skipped); returns the index of the member's value.
  const readMember = (i: number): number => {
    if (i >= n) throw new ScanError(i, 'unexpected end of line: expected a property name');
    if (text.charCodeAt(i) !== 0x22) throw new ScanError(i, `expected a property name in double quotes, found ${describeChar(text, i)}`);
    const end = scanString(i);
    const key = hadEscape ? (JSON.parse(text.slice(i, end)) as string) : text.slice(i + 1, end - 1);
    const d = depth - 1;
    keys[d] = key;
    if (lone.length) noteLone(pointerAt());
    const set = seen[d];
    if (set.has(key)) {
      notes.push({ kind: 'duplicate-key', pointer: pointerAt(), column: i + 1, detail: `name "${shorten(key)}" appears more than once in this object` });
    } else set.add(key);
    let j = skipWs(end);
    if (j >= n || text.charCodeAt(j) !== 0x3a) {
      throw new ScanError(j, j >= n ? "unexpected end of line: expected ':' after a property name" : `expected ':' after a property name, found ${describeChar(text, j)}`);
    }
    return skipWs(j + 1);
  };

  try {
    let i = skipWs(0);
    if (i >= n) throw new ScanError(i, 'no JSON value: the text is empty or only white space');
    let afterComma = false;
    for (;;) {
      // A value starts at i.
      if (i >= n) throw new ScanError(i, 'unexpected end of line: expected a value');
      const c = text.charCodeAt(i);
      let closedEmpty = false;
      if (c === 0x7b || c === 0x5b) {
        if (depth >= MAX_DEPTH) throw new ScanError(i, `nesting deeper than ${MAX_DEPTH} levels`);
        kinds[depth] = c === 0x7b ? OBJECT : ARRAY;
        indexes[depth] = 0;
        if (c === 0x7b) seen[depth] = new Set();
        depth++;
        i = skipWs(i + 1);
        const close = c === 0x7b ? 0x7d : 0x5d;
        if (i < n && text.charCodeAt(i) === close) {
          depth--;
          i++;
          closedEmpty = true;
        } else if (c === 0x7b) {
          i = readMember(i);
          afterComma = false;
          continue;
        } else {
          afterComma = false;
          continue;
        }
      }
      if (!closedEmpty) {
        if (c === 0x22) {
          i = scanString(i);
          if (lone.length) noteLone(pointerAt());
        } else if (c === 0x2d || isDigit(c)) {
          const start = i;
          let j = i;
          if (c === 0x2d) {
            j++;
            if (j >= n || !isDigit(text.charCodeAt(j))) throw new ScanError(j, "expected a digit after '-'");
          }
          if (text.charCodeAt(j) === 0x30) {
            j++;
            if (j < n && isDigit(text.charCodeAt(j))) throw new ScanError(j - 1, 'a number must not have a leading zero');
          } else {
            while (j < n && isDigit(text.charCodeAt(j))) j++;
          }
          let integer = true;
          if (j < n && text.charCodeAt(j) === 0x2e) {
            integer = false;
            j++;
            if (j >= n || !isDigit(text.charCodeAt(j))) throw new ScanError(j, "expected a digit after '.' in a number");
            while (j < n && isDigit(text.charCodeAt(j))) j++;
          }
          if (j < n && (text.charCodeAt(j) === 0x65 || text.charCodeAt(j) === 0x45)) {
            integer = false;
            j++;
            if (j < n && (text.charCodeAt(j) === 0x2b || text.charCodeAt(j) === 0x2d)) j++;
            if (j >= n || !isDigit(text.charCodeAt(j))) throw new ScanError(j, 'expected a digit in the exponent of a number');
            while (j < n && isDigit(text.charCodeAt(j))) j++;
          }
          // RFC 8259 §6: integers beyond ±(2^53−1) lose precision in many readers.
          if (integer && j - start >= 16 && Math.abs(Number(text.slice(start, j))) > MAX_SAFE) {
            notes.push({
              kind: 'unsafe-number',
              pointer: pointerAt(),
              column: start + 1,
              detail: `integer ${shorten(text.slice(start, j), 30)} is beyond ±(2^53−1)`,
            });
          }
          i = j;
        } else if (c === 0x74 || c === 0x66 || c === 0x6e) {
          const word = c === 0x74 ? 'true' : c === 0x66 ? 'false' : 'null';
          if (!text.startsWith(word, i)) throw new ScanError(i, 'invalid literal: expected true, false or null');
          i += word.length;
        } else if (afterComma && (c === 0x5d || c === 0x7d)) {
          throw new ScanError(i, `expected a value after ',', found ${describeChar(text, i)}`);
        } else {
          throw new ScanError(i, `unexpected ${describeChar(text, i)}: expected a value`);
        }
      }
      // After a value: close containers or move to the next element.
      let next = false;
      while (!next) {
        i = skipWs(i);
        if (depth === 0) {
          if (i < n) throw new ScanError(i, `unexpected ${describeChar(text, i)} after the value: a line holds one JSON value`);
          return { ok: true, notes };
        }
        const d = depth - 1;
        if (i >= n) {
          throw new ScanError(i, kinds[d] === ARRAY ? "unexpected end of line: expected ',' or ']'" : "unexpected end of line: expected ',' or '}'");
        }
        const t = text.charCodeAt(i);
        if (kinds[d] === ARRAY) {
          if (t === 0x2c) {
            indexes[d]++;
            i = skipWs(i + 1);
            next = true;
          } else if (t === 0x5d) {
            depth--;
            i++;
          } else throw new ScanError(i, `expected ',' or ']' after an array element, found ${describeChar(text, i)}`);
        } else {
          if (t === 0x2c) {
            i = skipWs(i + 1);
            if (i < n && text.charCodeAt(i) === 0x7d) throw new ScanError(i, "expected a property name after ',', found '}'");
            i = readMember(i);
            next = true;
          } else if (t === 0x7d) {
            depth--;
            i++;
          } else throw new ScanError(i, `expected ',' or '}' after a property value, found ${describeChar(text, i)}`);
        }
      }
      afterComma = true;
      // Object members arrive here already past their ':'; arrays past their ','.
      if (kinds[depth - 1] === OBJECT) afterComma = false;
    }
  } catch (e) {
    if (e instanceof ScanError) return { ok: false, column: e.index + 1, message: e.message, notes };
    throw e;
  }
}

/** Scan, then native JSON.parse for the value (the fast path callers use). */
export function parseLine(text: string): ParseLineResult {
  const r = scanJson(text);
  if (!r.ok) return { error: { column: r.column, message: r.message }, notes: r.notes };
  try {
    return { value: JSON.parse(text), notes: r.notes };
  } catch (e) {
    // Should not happen once the scan passed; kept so a reader quirk becomes a finding, not a crash.
    return { error: { column: 1, message: `the value could not be read: ${(e as Error).message}` }, notes: r.notes };
  }
}

/**
 * The 0-based offset of the bracket that opens nesting level `max + 1`, or -1 when the text never
 * nests that deep. Counts brackets outside strings only; cheap enough to run before a parser whose
 * own recursion a hostile record could exhaust.
 */
export function depthBeyond(text: string, max = MAX_DEPTH): number {
  if (text.length <= max) return -1;
  let depth = 0;
  const n = text.length;
  for (let j = 0; j < n; j++) {
    const t = text.charCodeAt(j);
    if (t === 0x22) {
      // Skip the string, honouring escapes; an unterminated one ends the text.
      j++;
      while (j < n) {
        const s = text.charCodeAt(j);
        if (s === 0x5c) j += 2;
        else if (s === 0x22) break;
        else j++;
      }
      continue;
    }
    if (t === 0x7b || t === 0x5b) {
      if (++depth > max) return j;
    } else if (t === 0x7d || t === 0x5d) depth--;
  }
  return -1;
}
