// The token counter against the reference tokenizer: OpenAI's tiktoken, whose WASM build is the npm
// package `tiktoken` (an independent oracle: Rust regex and merge code, not our code path).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { get_encoding, type Tiktoken as ReferenceEncoder } from 'tiktoken';
import { Tiktoken as ShippedEncoder } from 'js-tiktoken/lite';
import cl100kTable from 'js-tiktoken/ranks/cl100k_base';
import o200kTable from 'js-tiktoken/ranks/o200k_base';
import { ENCODINGS, type EncodingName } from '../../../../src/engine/config.js';
import { loadTokenCounter, type TokenCounter } from '../../../../src/engine/tokens/counter.js';
import { escapeText, prng, randomText, SPACE_LIKE } from './corpus.js';

const TABLES = { cl100k_base: cl100kTable, o200k_base: o200kTable } as const;
const STRINGS = 3000;

function sameIds(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

describe.each(ENCODINGS as EncodingName[])('%s against the reference tokenizer', (encoding) => {
  let reference: ReferenceEncoder;
  let counter: TokenCounter;
  beforeAll(async () => {
    reference = get_encoding(encoding);
    counter = await loadTokenCounter(encoding);
  });
  afterAll(() => reference.free());

  it(`gives the reference's ids and counts on ${STRINGS} seeded adversarial strings`, () => {
    // Oracle: tiktoken (WASM) encode_ordinary, i.e. special-token spellings as ordinary text.
    const seed = encoding === 'cl100k_base' ? 0x5eed1 : 0x5eed2;
    const rand = prng(seed);
    let firstDifference: string | null = null;
    let compared = 0;
    for (let i = 0; i < STRINGS && firstDifference === null; i++) {
      const text = randomText(rand);
      const expected = reference.encode_ordinary(text);
      const ids = counter.encode(text);
      const count = counter.count(text);
      if (!sameIds(ids, expected) || count !== expected.length) {
        firstDifference = `string #${i} (seed ${seed}): ${escapeText(text)}\n  reference ${Array.from(expected)}\n  ours      ${ids} (count ${count})`;
      }
      compared++;
    }
    expect(firstDifference).toBeNull();
    expect(compared).toBe(STRINGS);
  });

  it('agrees with the reference on long runs of every white-space-like character', () => {
    // Runs long enough to exercise the heap merge; oracle: tiktoken (WASM).
    for (const ch of SPACE_LIKE) {
      for (const text of [ch.repeat(300), `word${ch.repeat(257)}word`, `${ch}\n`.repeat(150), `x ${ch}`.repeat(100)]) {
        const expected = reference.encode_ordinary(text);
        const ids = counter.encode(text);
        expect(sameIds(ids, expected), `differs on ${escapeText(text.slice(0, 40))}…`).toBe(true);
      }
    }
  });

  it('agrees with the reference for every code point of planes 0 and 1 in two contexts', async () => {
    // Each code point sits between letters, and doubled after a space before a digit and a newline
    // (white-space rules); a batch that differs is split until the code point is found.
    const contexts = [(c: string) => `a${c}a `, (c: string) => ` ${c}${c} 1\n`];
    const differing: string[] = [];
    const probe = (cps: number[], context: (c: string) => string): void => {
      const text = cps.map((cp) => context(String.fromCodePoint(cp))).join('');
      if (sameIds(counter.encode(text), reference.encode_ordinary(text))) return;
      if (cps.length === 1) {
        differing.push(`U+${cps[0]!.toString(16).toUpperCase().padStart(4, '0')} in ${escapeText(text)}`);
        return;
      }
      const half = cps.length >> 1;
      probe(cps.slice(0, half), context);
      probe(cps.slice(half), context);
    };
    for (const context of contexts) {
      for (let base = 0; base < 0x20000; base += 2048) {
        probe(Array.from({ length: 2048 }, (_, i) => base + i), context);
        // Let the test runner's messages through during this long loop.
        await new Promise((done) => setImmediate(done));
      }
    }
    expect(differing.slice(0, 10)).toEqual([]);
  });

  it('js-tiktoken as shipped differs from the reference, so the rewritten pattern is still needed', () => {
    // If this starts failing, js-tiktoken has fixed its pre-tokenizer and patterns.ts can be revisited.
    const shipped = new ShippedEncoder(TABLES[encoding]);
    // The published U+0085 case (openai/tiktoken tests/test_encoding.py, via ../shared/testdata notes).
    const nel = ' \u00850';
    expect(sameIds(shipped.encode(nel, [], []), reference.encode_ordinary(nel))).toBe(false);
    expect(sameIds(counter.encode(nel), reference.encode_ordinary(nel))).toBe(true);

    const rand = prng(encoding === 'cl100k_base' ? 0x5eed1 : 0x5eed2);
    // Same seeded corpus as above: the shipped encoder must trip on some string of it.
    let firstShippedDifference = -1;
    for (let i = 0; i < STRINGS && firstShippedDifference < 0; i++) {
      const text = randomText(rand);
      if (!sameIds(shipped.encode(text, [], []), reference.encode_ordinary(text))) firstShippedDifference = i;
    }
    expect(firstShippedDifference).toBeGreaterThanOrEqual(0);
  });
});
