// Each process loads a tokenizer once and keeps it; its kind (kinds.ts) loads it.

import type { CheckConfig } from '../config.js';
import { tokenizerKindOf } from './kinds.js';
import { tokenizerOf, type Tokenizer } from './tokenizer.js';

export { TokenizerError, tokenizerOf, type Tokenizer } from './tokenizer.js';
export { resolveTokenizerValue, tokenizerLabel, tokenizerKindOf, TOKENIZER_KINDS, type TokenizerKind } from './kinds.js';

const loaded = new Map<string, Tokenizer>();
const loading = new Map<string, Promise<Tokenizer>>();

/** Loads the named tokenizer once per process; later calls return the same one. Throws TokenizerError. */
export function loadTokenizer(value: string): Promise<Tokenizer> {
  const ready = loaded.get(value);
  if (ready) return Promise.resolve(ready);
  let pending = loading.get(value);
  if (!pending) {
    pending = tokenizerKindOf(value).load(value).then((t) => {
      loaded.set(value, t);
      loading.delete(value);
      return t;
    });
    pending.catch(() => loading.delete(value));
    loading.set(value, pending);
  }
  return pending;
}

/** The loaded tokenizer of a configuration; throws when `loadTokenizer` has not finished for it. */
export function getTokenizer(config: Pick<CheckConfig, 'encoding' | 'tokenizer'>): Tokenizer {
  const value = tokenizerOf(config);
  const t = loaded.get(value);
  if (!t) throw new Error(`tokenizer "${value}" is not loaded yet: await loadTokenizer("${value}") first`);
  return t;
}
