// The merge core: both merge strategies, long pieces, the memo, and malformed rank tables.
import { afterAll, describe, expect, it } from 'vitest';
import { get_encoding } from 'tiktoken';
import cl100kTable from 'js-tiktoken/ranks/cl100k_base';
import { BytePairEncoder, bytesKey, decodeRanks } from '../../../../src/engine/tokens/bpe.js';
import { PATTERNS } from '../../../../src/engine/tokens/patterns.js';
import { escapeText, prng, randomText } from './corpus.js';

const ranks = decodeRanks(cl100kTable.bpe_ranks);
const reference = get_encoding('cl100k_base');
afterAll(() => reference.free());

/** Random runs of punctuation and symbols: one pre-token each, so the merge does all the work. */
function symbolRun(rand: () => number, length: number): string {
  const alphabet = '!@#$%^&*()_+-=[]{};:",.<>/?~`|\\=====----____****';
  let out = '';
  for (let i = 0; i < length; i++) out += alphabet[Math.floor(rand() * alphabet.length)];
  return out;
}

describe('BytePairEncoder', () => {
  it('heap merge and scan merge give the same ids, and both equal the reference', () => {
    const heap = new BytePairEncoder(ranks, PATTERNS.cl100k_base, { heapThreshold: 2 });
    const scan = new BytePairEncoder(ranks, PATTERNS.cl100k_base, { heapThreshold: Infinity });
    const rand = prng(0xb9e);
    for (let i = 0; i < 400; i++) {
      const text = i % 2 === 0 ? randomText(rand) : symbolRun(rand, 1 + Math.floor(rand() * 600));
      const a = heap.encodeOrdinary(text);
      expect(a, escapeText(text)).toEqual(scan.encodeOrdinary(text));
      // Oracle: tiktoken (WASM), the reference merge loop.
      expect(a, escapeText(text)).toEqual(Array.from(reference.encode_ordinary(text)));
    }
  });

  it('stays exact when the memo of pieces is tiny and keeps being emptied', () => {
    const small = new BytePairEncoder(ranks, PATTERNS.cl100k_base, { memoLimit: 3 });
    const rand = prng(0x3e3);
    for (let i = 0; i < 300; i++) {
      const text = randomText(rand);
      expect(small.countOrdinary(text), escapeText(text)).toBe(reference.encode_ordinary(text).length);
    }
  });

  it('encodes a 1 MB single piece, and its tokens spell the input bytes back', () => {
    // The hang guard is the test timeout; no speed is asserted here (see scripts/bench-tokens.mjs).
    const text = symbolRun(prng(0x1b), 1_000_000);
    const enc = new BytePairEncoder(ranks, PATTERNS.cl100k_base);
    expect(enc.pieces(text.slice(0, 2000))).toHaveLength(1);
    const ids = enc.encodeOrdinary(text);
    const byRank = new Map<number, string>();
    for (const [bytes, rank] of ranks) byRank.set(rank, bytes);
    expect(ids.map((id) => byRank.get(id)).join('')).toBe(text);
    expect(ids.length).toBeLessThan(text.length);
  });

  it('matches the reference on a 20 kB single piece', () => {
    const text = symbolRun(prng(0x20), 20_000);
    const enc = new BytePairEncoder(ranks, PATTERNS.cl100k_base);
    expect(enc.encodeOrdinary(text)).toEqual(Array.from(reference.encode_ordinary(text)));
  });
});

describe('bytesKey', () => {
  it('gives UTF-8 bytes one char per byte; a lone surrogate becomes U+FFFD (WHATWG Encoding, UTF-8 encode)', () => {
    expect(bytesKey('ab')).toBe('ab');
    expect(bytesKey('é')).toBe('\xC3\xA9');
    expect(bytesKey('🚲')).toBe('\xF0\x9F\x9A\xB2');
    expect(bytesKey('\uD800')).toBe('\xEF\xBF\xBD');
  });
});

describe('decodeRanks', () => {
  it('reads the compressed rank list', () => {
    const table = decodeRanks('! 0 YQ== Yg==\n! 10 YWI=\n');
    expect([...table]).toEqual([
      ['a', 0],
      ['b', 1],
      ['ab', 10],
    ]);
  });

  it('rejects a malformed line with a clear message', () => {
    expect(() => decodeRanks('! x YQ==')).toThrow(/rank table: bad line start/);
  });
});
