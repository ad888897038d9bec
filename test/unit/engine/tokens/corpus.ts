// Seeded generator of adversarial text for comparing the token counter with the reference tokenizer.
import { resolve } from 'node:path';

export const projectRoot = resolve(__dirname, '../../../..');
export const testdata = resolve(projectRoot, '../shared/testdata');

/** mulberry32: small seeded PRNG (common practice), so a failing string can be reproduced. */
export function prng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Unicode White_Space (UCD PropList.txt) plus the characters JavaScript and Rust disagree on or
 * that look like white space without being it (U+FEFF, U+180E, U+200B–U+200D, U+2060).
 */
export const SPACE_LIKE = [
  '\t', '\n', '\v', '\f', '\r', ' ', '\u0085', '\u00A0', '\u1680',
  '\u2000', '\u2001', '\u2002', '\u2003', '\u2004', '\u2005', '\u2006', '\u2007', '\u2008', '\u2009', '\u200A',
  '\u2028', '\u2029', '\u202F', '\u205F', '\u3000',
  '\uFEFF', '\u180E', '\u200B', '\u200C', '\u200D', '\u2060',
];

const POOLS: string[][] = [
  SPACE_LIKE,
  ['\uFEFF', '\u0085', '\r\n', '\n\n', '   ', '\t\t'],
  // emoji, ZWJ sequences, skin tones, flags, keycaps, variation selectors
  ['🚲', '🔧', '👍🏽', '👩🏿‍🔧', '👨‍👩‍👧‍👦', '🏳️‍🌈', '🇳🇱', '1️⃣', '✅', '🛠️', '❤️‍🔥'],
  ['自', '行', '车', '链', '條', 'のスポーク', '調整', '한국어', '자전거'],
  ['الدراجة', 'سلسلة', 'ً', 'ٌ', '٣', '؟'],
  ['साइकिल', 'चेन', '्', 'ि', '१२३'],
  ['function ', '=> ', '{', '}', '();', '\t\treturn ', '// ', '/* */', '!==', '&&', '::', '->', '#include'],
  ['{"role":', '"content": ', '[', ']', ',', '\\n', '\\u0085', 'null', 'true', '1e-7'],
  ['0', '7', '42', '1234567', '3.14159', '-12', '1,000', '٣٤', '²', '½', 'Ⅻ'],
  ["'s", "'t", "'re", "'ve", "'m", "'ll", "'d", "'S", "'LL", "'ſ", "don't", "WE'RE"],
  ['a', 'The', 'chain', 'SKIPPED', 'derailleur', 'Ünïcödé', 'ǅ', 'ﬁ', 'ß', 'İ', 'ǈ', 'ʰ', 'ᾈ'],
  ['e\u0301', '\u0301', 'n\u0303', '\u20DD', '\uFE0F', '\u200D'],
  ['.', '!', '?', '...', '—', '–', '/', '\\', '|', '<|', '|>', '<|endoftext|>', '"', '`'],
  ['\uD800', '\uDFFF', '\uFFFD', '\uFFFF', '\u0000', '\u001F', '\u007F', '\u0080', '\u009F'],
];

/** One string of 0–40 pieces; long runs of white space and newlines are made often. */
export function randomText(rand: () => number): string {
  const pieces = Math.floor(rand() * 40);
  let out = '';
  for (let i = 0; i < pieces; i++) {
    const roll = rand();
    if (roll < 0.08) {
      const ch = SPACE_LIKE[Math.floor(rand() * SPACE_LIKE.length)]!;
      out += ch.repeat(1 + Math.floor(rand() * 40));
    } else {
      const pool = POOLS[Math.floor(rand() * POOLS.length)]!;
      out += pool[Math.floor(rand() * pool.length)]!;
    }
  }
  return out;
}

/** Escapes a string so a failure message shows every invisible character. */
export function escapeText(text: string): string {
  return JSON.stringify(text).replace(/[\u007F-\uFFFF]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
