// Hand-written pre-tokenizers for the cl100k_base and o200k_base patterns of patterns.ts: they read
// char codes instead of running a Unicode-property regex, and cut text exactly where the regex
// does (test/unit/engine/tokens/pretokenize.test.ts fuzzes both against each other). Each function
// returns where the piece starting at `i` ends. The regex is matched leftmost-first with
// backtracking, so every branch below follows what the engine tries, alternative by alternative:
//
//   cl100k_base  1 CONTRACTION
//                2 [^\r\n\p{L}\p{N}]?\p{L}+
//                3 \p{N}{1,3}
//                4 ' '?[^WS\p{L}\p{N}]+[\r\n]*
//                5 WS*[\r\n]+        6 WS+(?!NOT_WS)        7 WS+
//   o200k_base   1 [^\r\n\p{L}\p{N}]?UPPER*LOWER+CONTRACTION?
//                2 [^\r\n\p{L}\p{N}]?UPPER+LOWER*CONTRACTION?
//                3 \p{N}{1,3}
//                4 ' '?[^WS\p{L}\p{N}]+[\r\n/]*
//                5–7 as cl100k_base
//
// with UPPER = [\p{Lu}\p{Lt}\p{Lm}\p{Lo}\p{M}], LOWER = [\p{Ll}\p{Lm}\p{Lo}\p{M}], WS the Unicode
// White_Space set of patterns.ts. A lone surrogate is a code point of its own, in no class.

import { WHITE_SPACE } from './patterns.js';

const L = 1; // \p{L}
const N = 2; // \p{N}
const UP = 4; // UPPER
const LO = 8; // LOWER
const WS = 16; // White_Space
const KNOWN = 128;

/** Classes of every code point, filled on first sight from the same regex properties patterns.ts uses. */
const classes = new Uint8Array(0x110000);
const IS_L = /^\p{L}$/u;
const IS_N = /^\p{N}$/u;
const IS_UP = /^[\p{Lu}\p{Lt}\p{Lm}\p{Lo}\p{M}]$/u;
const IS_LO = /^[\p{Ll}\p{Lm}\p{Lo}\p{M}]$/u;
const IS_WS = new RegExp(`^[${WHITE_SPACE}]$`, 'u');

function classify(cp: number): number {
  const ch = String.fromCodePoint(cp);
  let c = KNOWN;
  if (IS_L.test(ch)) c |= L;
  if (IS_N.test(ch)) c |= N;
  if (IS_UP.test(ch)) c |= UP;
  if (IS_LO.test(ch)) c |= LO;
  if (IS_WS.test(ch)) c |= WS;
  classes[cp] = c;
  return c;
}
for (let cp = 0; cp < 0x80; cp++) classify(cp);

/** Class bits of the code point at i (a lone surrogate stands for itself). */
function classAt(text: string, i: number): number {
  let cp = text.charCodeAt(i);
  if (cp >= 0xd800 && cp <= 0xdbff && i + 1 < text.length) {
    const lo = text.charCodeAt(i + 1);
    if (lo >= 0xdc00 && lo <= 0xdfff) cp = ((cp - 0xd800) << 10) + (lo - 0xdc00) + 0x10000;
  }
  const c = classes[cp]!;
  return c !== 0 ? c : classify(cp);
}

/** UTF-16 length of the code point at i: 2 for a surrogate pair, else 1. */
function widthAt(text: string, i: number): number {
  const hi = text.charCodeAt(i);
  if (hi >= 0xd800 && hi <= 0xdbff && i + 1 < text.length) {
    const lo = text.charCodeAt(i + 1);
    if (lo >= 0xdc00 && lo <= 0xdfff) return 2;
  }
  return 1;
}

/** End of the run of code points from i whose classes share a bit with `mask`. */
function runOf(text: string, i: number, mask: number): number {
  const n = text.length;
  while (i < n) {
    const c = text.charCodeAt(i);
    if (c < 0x80) {
      if ((classes[c]! & mask) === 0) return i;
      i++;
    } else {
      if ((classAt(text, i) & mask) === 0) return i;
      i += widthAt(text, i);
    }
  }
  return i;
}

/** End of the run of code points from i in none of the classes of `mask`. */
function runNotOf(text: string, i: number, mask: number): number {
  const n = text.length;
  while (i < n) {
    const c = text.charCodeAt(i);
    if (c < 0x80) {
      if ((classes[c]! & mask) !== 0) return i;
      i++;
    } else {
      if ((classAt(text, i) & mask) !== 0) return i;
      i += widthAt(text, i);
    }
  }
  return i;
}

function isCrLf(c: number): boolean {
  return c === 10 || c === 13;
}

/** Length of `'(?:[sSſ]|[tT]|[rR][eE]|[vV][eE]|[mM]|[lL][lL]|[dD])` at i, or 0. */
function contractionAt(text: string, i: number): number {
  if (text.charCodeAt(i) !== 39 || i + 1 >= text.length) return 0;
  const a = text.charCodeAt(i + 1) | 0x20;
  if (a === 0x73 || a === 0x74 || a === 0x6d || a === 0x64) return 2; // s t m d
  if (text.charCodeAt(i + 1) === 0x17f) return 2; // ſ folds to s
  if (i + 2 >= text.length) return 0;
  const b = text.charCodeAt(i + 2) | 0x20;
  if ((a === 0x72 || a === 0x76) && b === 0x65) return 3; // re ve
  if (a === 0x6c && b === 0x6c) return 3; // ll
  return 0;
}

/** Alternatives 5–7 at a white-space code point at i. */
function whiteSpaceEnd(text: string, i: number): number {
  const j = runOf(text, i, WS);
  // 5: WS*[\r\n]+ — backtracks to the last \r or \n of the run.
  for (let k = j - 1; k >= i; k--) {
    if (isCrLf(text.charCodeAt(k))) return k + 1;
  }
  // 6: WS+(?!NOT_WS) — the whole run at the end of text, else all but its last code point.
  if (j >= text.length) return j;
  // The run's last code point: white space is all in the BMP, so it is one char wide.
  if (j - 1 > i) return j - 1;
  // 7: WS+
  return j;
}

/** Alternative 4: ` ?[^WS\p{L}\p{N}]+` then a run of `tail` chars (\r \n, and / for o200k_base). */
function punctuationEnd(text: string, i: number, slash: boolean): number {
  let start = i;
  if (text.charCodeAt(i) === 32) {
    if (i + 1 >= text.length || (classAt(text, i + 1) & (WS | L | N)) !== 0) return -1;
    start = i + 1;
  } else if ((classAt(text, i) & (WS | L | N)) !== 0) return -1;
  let j = runNotOf(text, start, WS | L | N);
  const n = text.length;
  while (j < n) {
    const c = text.charCodeAt(j);
    if (c === 10 || c === 13 || (slash && c === 47)) j++;
    else break;
  }
  return j;
}

/** End of `\p{N}{1,3}` at i (i is a number). */
function digitsEnd(text: string, i: number): number {
  let j = i;
  for (let k = 0; k < 3 && j < text.length && (classAt(text, j) & N) !== 0; k++) j += widthAt(text, j);
  return j;
}

/** Whether the code point at i may be the optional `[^\r\n\p{L}\p{N}]` before a word. */
function prefixOk(text: string, i: number, cls: number): boolean {
  return (cls & (L | N)) === 0 && !isCrLf(text.charCodeAt(i));
}

/** The piece of cl100k_base's pattern that starts at i (i < text.length). */
export function cl100kPieceEnd(text: string, i: number): number {
  const n = text.length;
  const c0 = text.charCodeAt(i);
  // 1: contraction
  if (c0 === 39) {
    const k = contractionAt(text, i);
    if (k > 0) return i + k;
  }
  const cls = c0 < 0x80 ? classes[c0]! : classAt(text, i);
  const w = c0 < 0x80 ? 1 : widthAt(text, i);
  // 2: [^\r\n\p{L}\p{N}]?\p{L}+
  if ((cls & L) !== 0) return runOf(text, i + w, L);
  if (prefixOk(text, i, cls) && i + w < n && (classAt(text, i + w) & L) !== 0) return runOf(text, i + w, L);
  // 3: \p{N}{1,3}
  if ((cls & N) !== 0) return digitsEnd(text, i);
  // 4: punctuation
  const p = punctuationEnd(text, i, false);
  if (p >= 0) return p;
  // 5–7: white space (the only class left)
  return whiteSpaceEnd(text, i);
}

/** `UPPER*LOWER+` from b with the backtracking the regex does; -1 when it cannot match. */
function upperLowerEnd(text: string, b: number): number {
  const n = text.length;
  const u = runOf(text, b, UP);
  if (u < n && (classAt(text, u) & LO) !== 0) return runOf(text, u, LO);
  // Give back UPPER code points until one of them is also LOWER: LOWER+ is then that one alone.
  let k = u;
  while (k > b) {
    // step back one code point
    let back = k - 1;
    const lo = text.charCodeAt(back);
    if (lo >= 0xdc00 && lo <= 0xdfff && back > b) {
      const hi = text.charCodeAt(back - 1);
      if (hi >= 0xd800 && hi <= 0xdbff) back--;
    }
    if ((classAt(text, back) & LO) !== 0) return k;
    k = back;
  }
  return -1;
}

/** `UPPER+LOWER*` from b; -1 when it cannot match. */
function upperThenLowerEnd(text: string, b: number): number {
  const u = runOf(text, b, UP);
  if (u === b) return -1;
  return runOf(text, u, LO);
}

/** The piece of o200k_base's pattern that starts at i (i < text.length). */
export function o200kPieceEnd(text: string, i: number): number {
  const n = text.length;
  const c0 = text.charCodeAt(i);
  const cls = c0 < 0x80 ? classes[c0]! : classAt(text, i);
  const w = c0 < 0x80 ? 1 : widthAt(text, i);
  const prefix = prefixOk(text, i, cls) && i + w < n;
  // 1: [^\r\n\p{L}\p{N}]?UPPER*LOWER+CONTRACTION?
  let e = prefix ? upperLowerEnd(text, i + w) : -1;
  if (e < 0 && (cls & (UP | LO)) !== 0) e = upperLowerEnd(text, i);
  // 2: [^\r\n\p{L}\p{N}]?UPPER+LOWER*CONTRACTION?
  if (e < 0 && prefix) e = upperThenLowerEnd(text, i + w);
  if (e < 0 && (cls & UP) !== 0) e = upperThenLowerEnd(text, i);
  if (e >= 0) return e + contractionAt(text, e);
  // 3: \p{N}{1,3}
  if ((cls & N) !== 0) return digitsEnd(text, i);
  // 4: punctuation, then \r \n /
  const p = punctuationEnd(text, i, true);
  if (p >= 0) return p;
  // 5–7: white space
  return whiteSpaceEnd(text, i);
}

/** A function giving where the piece starting at i ends, for the patterns that have one. */
export type PieceEnd = (text: string, i: number) => number;
