// Token counts for a named encoding, exact to the reference tokenizer. The rank tables come from
// js-tiktoken and are large, so each is loaded on first use and kept for the process.

import { ENCODINGS, type EncodingName } from '../config.js';
import { BytePairEncoder, decodeRanks, type EncoderOptions, type RankTable } from './bpe.js';
import type { TokenizerKind } from './kinds.js';
import { PATTERNS, type PatternName } from './patterns.js';
import type { Tokenizer } from './tokenizer.js';

/** A built-in encoding: the first tokenizer kind. Content counts read special spellings as ordinary text. */
export interface TokenCounter extends Tokenizer {
  readonly encoding: EncodingName;
  readonly kind: 'encoding';
  /** Number of tokens in text; special-token spellings count as ordinary text. */
  count(text: string): number;
  /** Token ids of text; special-token spellings are encoded as ordinary text. */
  encode(text: string): number[];
  /** Token ids with every special-token spelling encoded as its special token. */
  encodeWithSpecial(text: string): number[];
  /** Special-token spellings of the encoding and their ids. */
  readonly specialTokens: Readonly<Record<string, number>>;
}

export interface SpecialTokenHit {
  token: string;
  /** UTF-16 offset of the spelling in the text. */
  index: number;
}

/**
 * Special-token spellings per encoding (openai/tiktoken, tiktoken_ext/openai_public.py).
 * Known without loading the rank table, so a check can look for them cheaply.
 */
export const SPECIAL_TOKENS: Readonly<Record<EncodingName, Readonly<Record<string, number>>>> = {
  cl100k_base: {
    '<|endoftext|>': 100257,
    '<|fim_prefix|>': 100258,
    '<|fim_middle|>': 100259,
    '<|fim_suffix|>': 100260,
    '<|endofprompt|>': 100276,
  },
  o200k_base: {
    '<|endoftext|>': 199999,
    '<|endofprompt|>': 200018,
  },
};

const loaded = new Map<EncodingName, TokenCounter>();
const loading = new Map<EncodingName, Promise<TokenCounter>>();

async function importTable(encoding: EncodingName): Promise<RankTable> {
  // Literal specifiers so a bundler can split each table into its own lazily loaded chunk.
  switch (encoding) {
    case 'cl100k_base':
      return (await import('js-tiktoken/ranks/cl100k_base')).default;
    case 'o200k_base':
      return (await import('js-tiktoken/ranks/o200k_base')).default;
    default:
      throw new Error(`unknown token encoding "${String(encoding)}" (known: cl100k_base, o200k_base)`);
  }
}

/** Loads the encoding's rank table once; later calls return the same counter. */
export function loadTokenCounter(encoding: EncodingName): Promise<TokenCounter> {
  const ready = loaded.get(encoding);
  if (ready) return Promise.resolve(ready);
  let pending = loading.get(encoding);
  if (!pending) {
    pending = importTable(encoding).then((table) => {
      const counter = createTokenCounter(encoding, table);
      loaded.set(encoding, counter);
      loading.delete(encoding);
      return counter;
    });
    pending.catch(() => loading.delete(encoding));
    loading.set(encoding, pending);
  }
  return pending;
}

/** The loaded counter for an encoding; throws when `loadTokenCounter` has not finished for it. */
export function getTokenCounter(encoding: EncodingName): TokenCounter {
  const counter = loaded.get(encoding);
  if (!counter) {
    throw new Error(`token encoding "${String(encoding)}" is not loaded yet: await loadTokenCounter("${String(encoding)}") first`);
  }
  return counter;
}

/** What a rank table and a pattern family give, before the table is named as one of ours. */
export type BpeCounter = Pick<TokenCounter, 'count' | 'encode' | 'encodeWithSpecial' | 'specialTokens'> & {
  /** Number of ids `encodeWithSpecial` gives, counted without building them. */
  countWithSpecial(text: string): number;
};

/** Builds a counter from any rank table and the pattern family it uses (gpt2, cl100k_base, o200k_base). */
export function createBpeCounter(table: RankTable, pattern: PatternName, options?: EncoderOptions): BpeCounter {
  const bpe = new BytePairEncoder(decodeRanks(table.bpe_ranks), PATTERNS[pattern], options);
  const specialTokens = Object.freeze({ ...table.special_tokens });
  return {
    specialTokens,
    count: (text) => bpe.countOrdinary(text),
    encode: (text) => bpe.encodeOrdinary(text),
    encodeWithSpecial(text) {
      const out: number[] = [];
      // A loop, not spread: a long text has more ids than a call may take arguments.
      const append = (ids: number[]) => {
        for (const id of ids) out.push(id);
      };
      let from = 0;
      for (const hit of findSpellings(text, specialTokens)) {
        append(bpe.encodeOrdinary(text.slice(from, hit.index)));
        out.push(specialTokens[hit.token]!);
        from = hit.index + hit.token.length;
      }
      append(bpe.encodeOrdinary(text.slice(from)));
      return out;
    },
    countWithSpecial(text) {
      let n = 0;
      let from = 0;
      for (const hit of findSpellings(text, specialTokens)) {
        n += bpe.countOrdinary(text.slice(from, hit.index)) + 1;
        from = hit.index + hit.token.length;
      }
      return n + bpe.countOrdinary(from === 0 ? text : text.slice(from));
    },
  };
}

/** Builds one of our encodings' counters from its rank table. */
export function createTokenCounter(encoding: EncodingName, table: RankTable, options?: EncoderOptions): TokenCounter {
  const bpe = createBpeCounter(table, encoding, options);
  return {
    encoding,
    name: encoding,
    label: encoding,
    kind: 'encoding',
    specialsInContent: 'text',
    chatTemplate: null,
    specialTextNote: (text) => encodingSpecialTextNote(text, encoding),
    ...bpe,
    countRendered: (text) => bpe.countWithSpecial(text),
    encodeRendered: (text) => bpe.encodeWithSpecial(text),
  };
}

/** Where text spells one of the encoding's special tokens, left to right, without overlaps. */
export function findSpecialTokenText(text: string, encoding: EncodingName): SpecialTokenHit[] {
  const tokens = SPECIAL_TOKENS[encoding];
  if (!tokens) throw new Error(`unknown token encoding "${String(encoding)}"`);
  return findSpellings(text, tokens);
}

/**
 * Control markers of widely used chat templates (common practice: the ChatML markers and the
 * end-of-text marker used by open-weight model templates). They are not special tokens of the
 * encodings above, but a pipeline that renders chats through such a template would read them as
 * turn boundaries.
 */
export const CHAT_TEMPLATE_MARKERS: readonly string[] = ['<|im_start|>', '<|im_end|>', '<|im_sep|>', '<|eot_id|>', '<|start_header_id|>', '<|end_header_id|>', '<|begin_of_text|>'];

const MARKER_TABLE: Record<string, number> = Object.fromEntries(CHAT_TEMPLATE_MARKERS.map((m, i) => [m, i]));

export function findChatMarkerText(text: string): SpecialTokenHit[] {
  return findSpellings(text, MARKER_TABLE);
}

const finders = new WeakMap<object, (text: string) => SpecialTokenHit[]>();
function findSpellings(text: string, tokens: Readonly<Record<string, number>>): SpecialTokenHit[] {
  let find = finders.get(tokens);
  if (!find) finders.set(tokens, (find = spellingFinder(Object.keys(tokens))));
  return find(text);
}

/** A finder of the given spellings in text, left to right, without overlaps; compiled once. */
export function spellingFinder(spellings: readonly string[]): (text: string) => SpecialTokenHit[] {
  const names = spellings.filter((n) => n !== '');
  if (names.length === 0) return () => [];
  // Longest first, so that a spelling that is a prefix of another never hides it.
  const alternatives = [...names].sort((a, b) => b.length - a.length).map((n) => n.replace(/[\\^$.*+?()[\]{}|]/g, '\\$&'));
  const re = new RegExp(alternatives.join('|'), 'g');
  // Most spellings share a character (`|`, `<`); a text without it cannot hold any of them.
  const common = [...new Set(names[0])].find((ch) => names.every((n) => n.includes(ch)));
  return (text) => {
    if (common !== undefined && !text.includes(common)) return [];
    const hits: SpecialTokenHit[] = [];
    for (const m of text.matchAll(re)) hits.push({ token: m[0], index: m.index! });
    return hits;
  };
}

/** Whether a value is the name of a built-in encoding. */
export function isEncodingName(value: string): value is EncodingName {
  return (ENCODINGS as readonly string[]).includes(value);
}

/**
 * The encodings read special spellings in content as ordinary text; a trainer that encodes special
 * tokens, or renders chats through a template, would read a control token there.
 */
function encodingSpecialTextNote(text: string, encoding: EncodingName): string | null {
  const hits = findSpecialTokenText(text, encoding);
  if (hits.length === 0) {
    const markers = findChatMarkerText(text);
    if (markers.length === 0) return null;
    const names = [...new Set(markers.map((h) => h.token))].map((n) => `"${n}"`).join(', ');
    return (
      `Text spells the chat-template marker${markers.length > 1 ? 's' : ''} ${names}; ` +
      'a pipeline that renders chats through such a template would read a turn boundary here.'
    );
  }
  const names = [...new Set(hits.map((h) => h.token))];
  const spelled = names.map((n) => `"${n}"`).join(', ');
  const times = hits.length === 1 ? 'once' : `${hits.length} times`;
  return (
    `Text spells the ${encoding} special token${names.length > 1 ? 's' : ''} ${spelled} (${times}); ` +
    'it is counted as ordinary text, but a trainer that encodes special tokens would read a control token here.'
  );
}

/** The first tokenizer kind: a built-in encoding, named by its name. */
export const encodingKind: TokenizerKind = {
  kind: 'encoding',
  written: `an encoding name (${ENCODINGS.join(', ')})`,
  claims: isEncodingName,
  resolve: (value) => value,
  problem: () => null,
  label: (value) => value,
  chatTemplates: false,
  load: (value) => loadTokenCounter(value as EncodingName),
};
