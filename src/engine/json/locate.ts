// Where things sit in a record's text: the column of the value an RFC 6901 pointer names, and the
// line and column of an offset in text that spans lines (an element of a pretty-printed array).
// A `TextLocator` is made once per record and answers any number of findings: the text is checked
// once, each container on a pointer's way is read once (where its members start is kept), and the
// line breaks are found once — placing many findings never reads the whole text once per finding.

import { splitPointer } from '../findings.js';
import { scanJson } from './scan.js';

export interface PointerPlace {
  /** 1-based column, in UTF-16 code units of the text. */
  column: number;
  /** False when the path does not exist: `column` is then that of the deepest existing ancestor. */
  found: boolean;
}

/** An object's members (name → where its value starts; a repeated name keeps its last member) or an array's elements. */
type Members = Map<string, number> | number[];

const INDEX_TOKEN = /^(0|[1-9][0-9]*)$/;

export class TextLocator {
  /** Whether the text is exactly one JSON value; checked on the first pointer asked. */
  private valid: boolean | undefined;
  /** Members of each container read so far, by the container's start; null where no container starts. */
  private readonly members = new Map<number, Members | null>();
  /** Offsets just after each `\n`, found on the first position asked. */
  private lineStarts: number[] | null = null;

  constructor(readonly text: string) {}

  /**
   * The 1-based column of the value an RFC 6901 pointer names. When the path does not exist, the
   * column of the deepest existing ancestor with found=false; null when the text is not one JSON
   * value. A duplicated name resolves to its last member, as JSON.parse does.
   */
  locate(pointer: string): PointerPlace | null {
    this.valid ??= scanJson(this.text).ok;
    if (!this.valid) return null;
    let i = skipWsAt(this.text, 0);
    let tokens: string[];
    try {
      tokens = splitPointer(pointer);
    } catch {
      return { column: i + 1, found: false };
    }
    for (const token of tokens) {
      const m = this.membersAt(i);
      let target: number | undefined;
      if (m instanceof Map) target = m.get(token);
      else if (m && INDEX_TOKEN.test(token)) target = m[Number(token)];
      if (target === undefined) return { column: i + 1, found: false };
      i = target;
    }
    return { column: i + 1, found: true };
  }

  /**
   * Where the 1-based `offset` into the text falls: `line` counts the line breaks before it (0 on
   * the text's first line), `column` is 1-based within that line.
   */
  position(offset: number): { line: number; column: number } {
    const starts = (this.lineStarts ??= lineStartsOf(this.text));
    const at = offset - 1;
    // Line breaks before `at` are the line starts at or before it.
    let lo = 0;
    let hi = starts.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (starts[mid] <= at) lo = mid + 1;
      else hi = mid;
    }
    return lo === 0 ? { line: 0, column: offset } : { line: lo, column: at - starts[lo - 1] + 1 };
  }

  /**
   * The file's line and column of the 1-based `offset` into a text that starts at `line`:`column`
   * of the file: on the text's first line the column counts from the text's own column.
   */
  placeAt(offset: number, line: number, column: number): { line: number; column: number } {
    const p = this.position(offset);
    return p.line === 0 ? { line, column: column + offset - 1 } : { line: line + p.line, column: p.column };
  }

  private membersAt(i: number): Members | null {
    let m = this.members.get(i);
    if (m === undefined) {
      m = readMembers(this.text, i);
      this.members.set(i, m);
    }
    return m;
  }
}

/** `new TextLocator(text).locate(pointer)`: for one pointer; make a locator to place several. */
export function locatePointer(text: string, pointer: string): PointerPlace | null {
  return new TextLocator(text).locate(pointer);
}

function lineStartsOf(text: string): number[] {
  const starts: number[] = [];
  for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) starts.push(i + 1);
  return starts;
}

function isWs(c: number): boolean {
  return c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09;
}

function skipWsAt(text: string, i: number): number {
  while (i < text.length && isWs(text.charCodeAt(i))) i++;
  return i;
}

/** The members of the object or array starting at i, or null when no container starts there (text is well-formed). */
function readMembers(text: string, i: number): Members | null {
  const c = text.charCodeAt(i);
  if (c === 0x7b) {
    const out = new Map<string, number>();
    let j = skipWsAt(text, i + 1);
    while (text.charCodeAt(j) !== 0x7d) {
      const keyEnd = skipStringAt(text, j);
      const raw = text.slice(j + 1, keyEnd - 1);
      const key = raw.includes('\\') ? (JSON.parse(text.slice(j, keyEnd)) as string) : raw;
      j = skipWsAt(text, skipWsAt(text, keyEnd) + 1);
      out.set(key, j);
      j = skipWsAt(text, skipValueAt(text, j));
      if (text.charCodeAt(j) === 0x2c) j = skipWsAt(text, j + 1);
    }
    return out;
  }
  if (c === 0x5b) {
    const out: number[] = [];
    let j = skipWsAt(text, i + 1);
    while (text.charCodeAt(j) !== 0x5d) {
      out.push(j);
      j = skipWsAt(text, skipValueAt(text, j));
      if (text.charCodeAt(j) === 0x2c) j = skipWsAt(text, j + 1);
    }
    return out;
  }
  return null;
}

/** Index after the closing quote of the string whose opening quote is at i (text is well-formed). */
function skipStringAt(text: string, i: number): number {
  let j = i + 1;
  for (;;) {
    const q = text.indexOf('"', j);
    if (q < 0) return text.length;
    let b = q - 1;
    while (b > i && text.charCodeAt(b) === 0x5c) b--;
    if ((q - 1 - b) % 2 === 0) return q + 1;
    j = q + 1;
  }
}

/** Index after the value starting at i (text is well-formed). */
function skipValueAt(text: string, i: number): number {
  const c = text.charCodeAt(i);
  if (c === 0x22) return skipStringAt(text, i);
  if (c === 0x7b || c === 0x5b) {
    let depth = 0;
    let j = i;
    const n = text.length;
    while (j < n) {
      const t = text.charCodeAt(j);
      if (t === 0x22) {
        j = skipStringAt(text, j);
        continue;
      }
      if (t === 0x7b || t === 0x5b) depth++;
      else if (t === 0x7d || t === 0x5d) {
        depth--;
        if (depth === 0) return j + 1;
      }
      j++;
    }
    return n;
  }
  let j = i;
  while (j < text.length) {
    const t = text.charCodeAt(j);
    if (t === 0x2c || t === 0x7d || t === 0x5d || isWs(t)) break;
    j++;
  }
  return j;
}
