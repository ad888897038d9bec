// The token counter against published ids and the reference tokenizer's special-token handling.
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { get_encoding } from 'tiktoken';
import cl100kTable from 'js-tiktoken/ranks/cl100k_base';
import o200kTable from 'js-tiktoken/ranks/o200k_base';
import gpt2Table from 'js-tiktoken/ranks/gpt2';
import r50kTable from 'js-tiktoken/ranks/r50k_base';
import p50kTable from 'js-tiktoken/ranks/p50k_base';
import { ENCODINGS, type EncodingName } from '../../../../src/engine/config.js';
import {
  createBpeCounter,
  findSpecialTokenText,
  getTokenCounter,
  loadTokenCounter,
  SPECIAL_TOKENS,
} from '../../../../src/engine/tokens/counter.js';
import { escapeText, prng, randomText, testdata } from './corpus.js';

interface PublishedCase {
  encoding: string;
  text: string;
  ids: number[];
}
interface PublishedFile {
  encode: PublishedCase[];
  encode_with_all_special: PublishedCase[];
}

// openai/tiktoken tests/test_encoding.py, as ../shared/testdata/tokens/tiktoken-published.json (SOURCES.md).
function readPublished(): PublishedFile {
  return JSON.parse(readFileSync(resolve(testdata, 'tokens/tiktoken-published.json'), 'utf8')) as PublishedFile;
}

/** Counters for every encoding the published file uses; the three older ones share the gpt2 pattern. */
async function counterFor(encoding: string) {
  switch (encoding) {
    case 'cl100k_base':
    case 'o200k_base':
      return loadTokenCounter(encoding);
    case 'gpt2':
      return createBpeCounter(gpt2Table, 'gpt2');
    case 'r50k_base':
      return createBpeCounter(r50kTable, 'gpt2');
    case 'p50k_base':
      return createBpeCounter(p50kTable, 'gpt2');
    default:
      throw new Error(`published case uses an encoding this test does not know: ${encoding}`);
  }
}

describe('loading', () => {
  it('getTokenCounter before loading says what to do', () => {
    // Must run before any load in this file (tests in a file run in order).
    expect(() => getTokenCounter('o200k_base')).toThrow(/not loaded yet: await loadTokenCounter\("o200k_base"\)/);
  });

  it('loads once and hands out the same counter', async () => {
    const [a, b] = await Promise.all([loadTokenCounter('cl100k_base'), loadTokenCounter('cl100k_base')]);
    expect(a).toBe(b);
    expect(getTokenCounter('cl100k_base')).toBe(a);
    expect(a.encoding).toBe('cl100k_base');
  });

  it('rejects an unknown encoding with a clear message', async () => {
    await expect(loadTokenCounter('p51k_base' as EncodingName)).rejects.toThrow(/unknown token encoding "p51k_base"/);
  });
});

describe('published ids (openai/tiktoken tests/test_encoding.py)', () => {
  it('every ordinary case gives the published ids and count', async () => {
    const published = readPublished();
    expect(published.encode.length).toBeGreaterThanOrEqual(16);
    for (const c of published.encode) {
      const counter = await counterFor(c.encoding);
      expect(counter.encode(c.text), `${c.encoding} ${escapeText(c.text)}`).toEqual(c.ids);
      expect(counter.count(c.text)).toBe(c.ids.length);
    }
  });

  it('every all-special case gives the published ids', async () => {
    const published = readPublished();
    expect(published.encode_with_all_special.length).toBeGreaterThan(0);
    for (const c of published.encode_with_all_special) {
      const counter = await counterFor(c.encoding);
      expect(counter.encodeWithSpecial(c.text), `${c.encoding} ${escapeText(c.text)}`).toEqual(c.ids);
    }
  });
});

describe.each(ENCODINGS as EncodingName[])('%s special tokens', (encoding) => {
  const reference = get_encoding(encoding);
  afterAll(() => reference.free());
  const table = encoding === 'cl100k_base' ? cl100kTable : o200kTable;

  it('our spelling table equals js-tiktoken\'s table and the reference encodes each spelling as that id', () => {
    expect(SPECIAL_TOKENS[encoding]).toEqual(table.special_tokens);
    for (const [spelling, id] of Object.entries(SPECIAL_TOKENS[encoding])) {
      // Oracle: tiktoken (WASM) encode with allowed_special = 'all'.
      expect(Array.from(reference.encode(spelling, 'all'))).toEqual([id]);
    }
  });

  it('counts a spelled special token as ordinary text, as the reference encode_ordinary does', async () => {
    const counter = await loadTokenCounter(encoding);
    const text = 'Reset the hanger.<|endoftext|> Then <|endofprompt|>re-index';
    expect(counter.encode(text)).toEqual(Array.from(reference.encode_ordinary(text)));
    expect(counter.count(text)).toBeGreaterThan(4);
  });

  it('finds special-token spellings where the reference sees special tokens', async () => {
    const counter = await loadTokenCounter(encoding);
    const specialIds = new Set(Object.values(SPECIAL_TOKENS[encoding]));
    const spellings = Object.keys(SPECIAL_TOKENS[encoding]);
    const rand = prng(0x5bec1a1);
    for (let i = 0; i < 300; i++) {
      let text = randomText(rand);
      // Splice a few spellings (and near misses) in at random places.
      for (let k = Math.floor(rand() * 4); k > 0; k--) {
        const at = Math.floor(rand() * (text.length + 1));
        const insert = rand() < 0.7 ? spellings[Math.floor(rand() * spellings.length)]! : '<|endoftext|';
        text = text.slice(0, at) + insert + text.slice(at);
      }
      const expected = Array.from(reference.encode(text, 'all'));
      expect(counter.encodeWithSpecial(text), escapeText(text)).toEqual(expected);
      const hits = findSpecialTokenText(text, encoding);
      expect(hits.length, escapeText(text)).toBe(expected.filter((id) => specialIds.has(id)).length);
      for (const hit of hits) expect(text.startsWith(hit.token, hit.index)).toBe(true);
    }
  });
});

describe('findSpecialTokenText', () => {
  it('reports each spelling with its UTF-16 offset, left to right', () => {
    const text = '🚲 <|endoftext|><|fim_prefix|> and <|endofprompt|>';
    expect(findSpecialTokenText(text, 'cl100k_base')).toEqual([
      { token: '<|endoftext|>', index: 3 },
      { token: '<|fim_prefix|>', index: 16 },
      { token: '<|endofprompt|>', index: 35 },
    ]);
    // o200k_base has no fill-in-the-middle tokens (tiktoken_ext/openai_public.py).
    expect(findSpecialTokenText(text, 'o200k_base').map((h) => h.token)).toEqual(['<|endoftext|>', '<|endofprompt|>']);
    expect(findSpecialTokenText('<|endoftext| |>', 'cl100k_base')).toEqual([]);
  });
});
