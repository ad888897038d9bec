// The hand-written pre-tokenizers (pretokenize.ts) against the patterns they replace (patterns.ts,
// run as JavaScript regexes): the same cuts on fuzzed text. The patterns themselves are checked
// against the reference tokenizer in reference.test.ts and fastpath.test.ts.
import { describe, expect, it } from 'vitest';
import { PATTERNS } from '../../../../src/engine/tokens/patterns.js';
import { cl100kPieceEnd, o200kPieceEnd, type PieceEnd } from '../../../../src/engine/tokens/pretokenize.js';
import { escapeText, prng, randomText, SPACE_LIKE } from './corpus.js';

const SCANNERS: Record<'cl100k_base' | 'o200k_base', PieceEnd> = {
  cl100k_base: cl100kPieceEnd,
  o200k_base: o200kPieceEnd,
};

function byPattern(pattern: string, text: string): string[] {
  return Array.from(text.matchAll(new RegExp(pattern, 'gu')), (m) => m[0]);
}

function byScanner(end: PieceEnd, text: string): string[] {
  const out: string[] = [];
  for (let i = 0; i < text.length; ) {
    const e = end(text, i);
    if (!(e > i && e <= text.length)) throw new Error(`scanner stalled at ${i} in ${escapeText(text)}`);
    out.push(text.slice(i, e));
    i = e;
  }
  return out;
}

/**
 * Characters chosen from every class the patterns tell apart: upper/lower/title case, modifier and
 * other letters, combining marks, digits of several scripts, every white space, \r \n, apostrophes
 * and contraction letters, slashes, astral letters, digits and emoji (surrogate pairs), lone
 * surrogates, controls.
 */
const ALPHABET = [
  ...'aAzZsStTrReEvVmMlLdDkK',
  "'", "'", "'", '/', '/', '.', ',', '-', '_', '(', '"', '#', '{', '}',
  '0', '1', '9', '٣', '²', '½', 'Ⅻ', '𝟘', '𑁦', // digits and numbers, astral ones last
  'ſ', 'ǅ', 'ǈ', 'ʰ', 'ᵃ', 'ー', 'ß', 'İ', 'ﬁ', 'ᾈ', 'Ω', 'ω', 'É', 'é', // cased, title case, modifiers
  '自', '한', 'ا', 'ש', 'क', 'ก', // other letters (Lo)
  '\u0301', '\u05B7', '\u093F', '\u0E31', '\u20DD', '\uFE0F', '\u200D', '\u0651', // marks and joiners
  '𝐀', '𝐚', '𐐀', '𐐨', '𞤀', '🚲', '👍', '🏽', // astral Lu, Ll, Lu/Ll Deseret, Adlam, emoji, skin tone
  '\uD800', '\uDBFF', '\uDC00', '\uDFFF', // lone surrogates
  '\u0000', '\u007F', '\u0080', '\uFFFD', '\uFFFF',
  ...SPACE_LIKE,
  '\r', '\n', '\r\n', ' ', ' ', ' ', '\t',
];

function fuzzText(rand: () => number): string {
  const length = Math.floor(rand() * 24);
  let out = '';
  for (let i = 0; i < length; i++) {
    const roll = rand();
    if (roll < 0.05) {
      // any code point at all, surrogates included
      out += String.fromCodePoint(Math.floor(rand() * 0x110000));
    } else if (roll < 0.1) {
      out += ALPHABET[Math.floor(rand() * ALPHABET.length)]!.repeat(2 + Math.floor(rand() * 6));
    } else {
      out += ALPHABET[Math.floor(rand() * ALPHABET.length)]!;
    }
  }
  return out;
}

describe.each(['cl100k_base', 'o200k_base'] as const)('%s pre-tokenizer over char codes', (encoding) => {
  const pattern = PATTERNS[encoding];
  const end = SCANNERS[encoding];

  it('cuts 60,000 fuzzed strings exactly where the pattern does', () => {
    const rand = prng(encoding === 'cl100k_base' ? 0xc011 : 0x0200);
    let firstDifference: string | null = null;
    for (let i = 0; i < 60_000 && firstDifference === null; i++) {
      const text = i % 4 === 3 ? randomText(rand) : fuzzText(rand);
      const expected = byPattern(pattern, text);
      const got = byScanner(end, text);
      if (got.length !== expected.length || got.some((p, k) => p !== expected[k])) {
        firstDifference = `#${i} ${escapeText(text)}\n  pattern ${expected.map(escapeText).join(' ')}\n  scanner ${got.map(escapeText).join(' ')}`;
      }
    }
    expect(firstDifference).toBeNull();
  });

  it('cuts every code point of planes 0, 1 and 2 as the pattern does, in contexts that test each class', () => {
    const contexts = [(c: string) => `a${c}a `, (c: string) => ` ${c}${c} 1\n`, (c: string) => `${c}'s ${c}A'LL ${c}\r\n${c}/`, (c: string) => `A${c}b${c}${c}Ab`];
    for (const context of contexts) {
      for (let base = 0; base < 0x30000; base += 4096) {
        let text = '';
        for (let cp = base; cp < base + 4096; cp++) text += context(String.fromCodePoint(cp));
        const expected = byPattern(pattern, text);
        const got = byScanner(end, text);
        if (got.length !== expected.length || got.some((p, k) => p !== expected[k])) {
          // Narrow down to the first code point whose text differs, for the message.
          for (let cp = base; cp < base + 4096; cp++) {
            const one = context(String.fromCodePoint(cp));
            expect(byScanner(end, one), escapeText(one)).toEqual(byPattern(pattern, one));
          }
        }
      }
    }
  });

  it('cuts long runs of white space and newlines as the pattern does', () => {
    const rand = prng(0x5ace);
    for (let i = 0; i < 2000; i++) {
      let text = '';
      for (let k = Math.floor(rand() * 6); k >= 0; k--) {
        const ch = rand() < 0.7 ? SPACE_LIKE[Math.floor(rand() * SPACE_LIKE.length)]! : ALPHABET[Math.floor(rand() * ALPHABET.length)]!;
        text += ch.repeat(1 + Math.floor(rand() * 50));
      }
      expect(byScanner(end, text), escapeText(text)).toEqual(byPattern(pattern, text));
    }
  });
});
