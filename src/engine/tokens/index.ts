// Where a tokenizer value is dispatched to its kind, once: a built-in encoding name, else a model
// folder. Each process loads a tokenizer once and keeps it.

import { isAbsolute, resolve } from 'node:path';
import type { CheckConfig } from '../config.js';
import { loadTokenCounter } from './counter.js';
import { loadModelTokenizer, modelFolderProblem } from './model.js';
import { isEncodingName, TokenizerError, tokenizerOf, type Tokenizer } from './tokenizer.js';

export { TokenizerError, tokenizerOf, tokenizerLabel, isEncodingName, type Tokenizer } from './tokenizer.js';

const loaded = new Map<string, Tokenizer>();
const loading = new Map<string, Promise<Tokenizer>>();

/** Loads the named tokenizer once per process; later calls return the same one. Throws TokenizerError. */
export function loadTokenizer(value: string): Promise<Tokenizer> {
  const ready = loaded.get(value);
  if (ready) return Promise.resolve(ready);
  let pending = loading.get(value);
  if (!pending) {
    pending = (isEncodingName(value) ? loadTokenCounter(value) : loadModelTokenizer(value)).then((t) => {
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

/**
 * Validates a user's tokenizer value (`--tokenizer`, a setting, the project file): a built-in
 * encoding name, or a model folder (or its tokenizer.json) resolved against `baseDir`. Returns
 * what to put in `CheckConfig.tokenizer`; throws TokenizerError with a clear message. Only checks
 * that the folder exists and holds tokenizer.json; a malformed file is reported when it is loaded.
 */
export function resolveTokenizerValue(value: string, baseDir: string): string {
  const v = value.trim();
  if (v === '') throw new TokenizerError('The tokenizer is empty: give an encoding name (cl100k_base, o200k_base) or a model folder holding tokenizer.json.');
  if (isEncodingName(v)) return v;
  const path = isAbsolute(v) ? v : resolve(baseDir, v);
  const problem = modelFolderProblem(path);
  if (problem) {
    const hint = /^[a-z0-9_]+$/i.test(v) ? ' The built-in encodings are cl100k_base and o200k_base.' : '';
    throw new TokenizerError(`Unknown tokenizer "${value}": ${problem}.${hint}`);
  }
  return path;
}
