// The fast counting path (pre-tokenizer over char codes, count table per piece, merges over token id
// pairs) against the reference tokenizer on a generated corpus built to hit every cut the patterns
// make. Oracle: OpenAI's tiktoken, WASM build (npm `tiktoken`): Rust regex and merge code, not ours.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { get_encoding, type Tiktoken as ReferenceEncoder } from 'tiktoken';
import cl100kTable from 'js-tiktoken/ranks/cl100k_base';
import o200kTable from 'js-tiktoken/ranks/o200k_base';
import { createTokenCounter, type TokenCounter } from '../../../../src/engine/tokens/counter.js';
import { escapeText, prng } from './corpus.js';

const TABLES = { cl100k_base: cl100kTable, o200k_base: o200kTable } as const;
const STRINGS = 4000;

/** Unicode White_Space (UCD PropList.txt, from memory) and the three characters nearest to it. */
const WHITE_SPACE_AND_KIN = [
  '\t', '\n', '\v', '\f', '\r', ' ', '\u0085', '\u00A0', '\u1680', '\u2000', '\u2001', '\u2002', '\u2003',
  '\u2004', '\u2005', '\u2006', '\u2007', '\u2008', '\u2009', '\u200A', '\u2028', '\u2029', '\u202F',
  '\u205F', '\u3000',
  '\uFEFF', '\u200B', '\u0085',
];

const POOLS: readonly (readonly string[])[] = [
  WHITE_SPACE_AND_KIN,
  // emoji: ZWJ sequences, skin tones, flags, keycaps, variation selectors
  ['🚲', '👍', '👍🏻', '👍🏿', '👩‍🔧', '👩🏽‍🔧', '👨‍👩‍👧‍👦', '🏳️‍🌈', '🇳🇱🇯🇵', '#️⃣', '❤️', '🧑🏾‍🤝‍🧑🏻', '😀😃'],
  // CJK, kana, Hangul (precomposed and conjoining jamo)
  ['自行车', '链条', '變速器', 'スポーク', 'ひらがな', 'カタカナー', '자전거', '브레이크', '\u1100\u1161\u11A8', '한국어'],
  // Arabic and Hebrew with marks, right-to-left marks
  ['الدَّرَّاجَة', 'سِلْسِلَة', 'ٱلْعَجَلَة', '؟', 'שָׁלוֹם', 'אוֹפַנַּיִם', 'בְּ', '\u200F', '\u200E'],
  // combining marks on their own and after letters
  ['e\u0301', '\u0301', 'A\u030A', '\u0651', '\u05B7', '\u20DD', '\uFE0F', '\u200D', '\u093F'],
  // code
  ['function tension(cable) {', '\treturn cable.pull * 0.5;', '}', '=> ', '!==', '&&', '// TODO', '/* */', '#include <stdio.h>', 'x->y', 'a::b', 'path/to/file.ts', '\\n'],
  // JSON
  ['{"role": "user", "content": "', '"}', '[1, 2, 3]', '{"torque_nm": 5.5}', 'null', 'true', '1e-7', '\\u0085', '"\\ud83d\\udeb2"'],
  // contractions in every case, and near misses
  ["'s", "'S", "'t", "'T", "'re", "'RE", "'Re", "'rE", "'ve", "'VE", "'vE", "'m", "'M", "'ll", "'LL", "'lL", "'Ll", "'d", "'D", "'ſ", "'x", "'", "''"],
  // words: cases, title case letters, modifier letters, ligatures
  ['chain', 'Chain', 'CHAIN', 'derailleur', 'DON', 'we', 'WE', 'ǅemal', 'ǈ', 'ʰ', 'ﬁx', 'Straße', 'İstanbul', 'ΣΊΣΥΦΟΣ', 'ᾈ'],
  // punctuation and symbols
  ['.', '...', '?!', '—', '–', '/', '//', '\\', '|', '<|endoftext|>', '«»', '¿', '©', '°C', '€5'],
  // lone surrogates and other odd code units
  ['\uD800', '\uDBFF', '\uDC00', '\uDFFF', '\uFFFD', '\uFFFF', '\u0000', '\u001B', '\u007F', '\u009F'],
];

/** Digits of several scripts in runs of 1 to 12. */
function digitRun(rand: () => number): string {
  const scripts = ['0123456789', '٠١٢٣٤٥٦٧٨٩', '०१२३४५६७८९', '０１２３４５６７８９'];
  const digits = scripts[Math.floor(rand() * scripts.length)]!;
  let out = '';
  for (let k = 1 + Math.floor(rand() * 12); k > 0; k--) out += digits[Math.floor(rand() * 10)];
  return out;
}

/** One string: 1–30 items, with long runs of white space and newlines now and then. */
function corpusText(rand: () => number): string {
  let out = '';
  for (let k = 1 + Math.floor(rand() * 30); k > 0; k--) {
    const roll = rand();
    if (roll < 0.1) {
      const ch = WHITE_SPACE_AND_KIN[Math.floor(rand() * WHITE_SPACE_AND_KIN.length)]!;
      out += ch.repeat(1 + Math.floor(rand() * (rand() < 0.2 ? 300 : 8)));
    } else if (roll < 0.15) {
      out += (rand() < 0.5 ? '\n' : ' ').repeat(2 + Math.floor(rand() * 60)) + (rand() < 0.5 ? '\r\n' : '');
    } else if (roll < 0.25) {
      out += digitRun(rand);
    } else {
      const pool = POOLS[Math.floor(rand() * POOLS.length)]!;
      out += pool[Math.floor(rand() * pool.length)]!;
      if (rand() < 0.5) out += ' ';
    }
  }
  return out;
}

function sameIds(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

describe.each(['o200k_base', 'cl100k_base'] as const)('%s fast counting path against the reference tokenizer', (encoding) => {
  let reference: ReferenceEncoder;
  let counter: TokenCounter;
  // A counter whose tables are emptied every few pieces, so both the hit and the miss path count.
  let forgetful: TokenCounter;
  const seed = encoding === 'o200k_base' ? 0xfa57 : 0xfa58;
  beforeAll(() => {
    reference = get_encoding(encoding);
    counter = createTokenCounter(encoding, TABLES[encoding]);
    forgetful = createTokenCounter(encoding, TABLES[encoding], { memoLimit: 7 });
  });
  afterAll(() => reference.free());

  it(`gives the reference's count and ids on ${STRINGS} seeded strings, counted cold and again from the table`, () => {
    const rand = prng(seed);
    let firstDifference: string | null = null;
    for (let i = 0; i < STRINGS && firstDifference === null; i++) {
      const text = corpusText(rand);
      // Oracle: tiktoken (WASM) encode_ordinary.
      const expected = reference.encode_ordinary(text);
      const counts = [counter.count(text), counter.count(text), forgetful.count(text)];
      const ids = counter.encode(text);
      if (counts.some((n) => n !== expected.length) || !sameIds(ids, expected)) {
        firstDifference = `string #${i} (seed ${seed}): ${escapeText(text)}\n  reference ${Array.from(expected)}\n  ours ${ids} (counts ${counts})`;
      }
    }
    expect(firstDifference).toBeNull();
  });

  it('gives the reference total over the whole corpus joined into records, as a shard is counted', () => {
    const rand = prng(seed + 1);
    const records = Array.from({ length: 600 }, () => Array.from({ length: 8 }, () => corpusText(rand)).join(''));
    const fresh = createTokenCounter(encoding, TABLES[encoding]);
    let ours = 0;
    let theirs = 0;
    for (const r of records) {
      ours += fresh.count(r);
      theirs += reference.encode_ordinary(r).length; // oracle: tiktoken (WASM)
    }
    expect(ours).toBe(theirs);
    // A second pass reads every piece from the count table.
    expect(records.reduce((n, r) => n + fresh.count(r), 0)).toBe(theirs);
  });

  it('counts a rendered sequence with special tokens as the reference encodes it with all specials allowed', () => {
    const rand = prng(seed + 2);
    const spellings = Object.keys(TABLES[encoding].special_tokens);
    for (let i = 0; i < 500; i++) {
      let text = corpusText(rand);
      for (let k = Math.floor(rand() * 4); k > 0; k--) {
        const at = Math.floor(rand() * (text.length + 1));
        text = text.slice(0, at) + spellings[Math.floor(rand() * spellings.length)]! + text.slice(at);
      }
      // Oracle: tiktoken (WASM) encode with allowed_special = 'all'.
      const expected = reference.encode(text, 'all');
      expect(counter.countRendered(text), escapeText(text)).toBe(expected.length);
      expect(sameIds(counter.encodeRendered(text), expected), escapeText(text)).toBe(true);
    }
  });

  it('counts long runs of each white-space character and of spaces and newlines as the reference does', () => {
    for (const ch of [...WHITE_SPACE_AND_KIN, ' \n', '\r\n', '\n\n ']) {
      for (const length of [1, 2, 3, 47, 48, 49, 130, 1000]) {
        for (const text of [ch.repeat(length), `a${ch.repeat(length)}b`, `1${ch.repeat(length)}'s`, `${ch.repeat(length)}🚲`]) {
          const expected = reference.encode_ordinary(text); // oracle: tiktoken (WASM)
          expect(counter.count(text), escapeText(text.slice(0, 40))).toBe(expected.length);
          expect(forgetful.count(text), escapeText(text.slice(0, 40))).toBe(expected.length);
          expect(sameIds(counter.encode(text), expected), escapeText(text.slice(0, 40))).toBe(true);
        }
      }
    }
  });
});
