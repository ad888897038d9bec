// The tokenizer kinds, listed once. A tokenizer is named by one string (a setting, `--tokenizer`,
// the project file); the first kind that claims the string names, checks, labels and loads it.
// A new kind is one file that exports a TokenizerKind, and one line in TOKENIZER_KINDS.

import { encodingKind } from './counter.js';
import { modelFolderKind } from './model.js';
import { TokenizerError, type Tokenizer } from './tokenizer.js';
import { join } from 'node:path';

export interface TokenizerKind {
  /** The kind's name, as `Tokenizer.kind` carries it. */
  readonly kind: string;
  /** What a person writes for this kind, for the message when nothing names a tokenizer. */
  readonly written: string;
  /** Whether `value` names a tokenizer of this kind, from the text alone (kinds are asked in order). */
  claims(value: string): boolean;
  /**
   * `value` checked and made what crosses to workers (an absolute path, say), without loading
   * anything heavy; relative paths resolve against `baseDir`. Throws TokenizerError.
   */
  resolve(value: string, baseDir: string): string;
  /** What is wrong with a value of this kind without loading it (a folder that is gone), or null. */
  problem(value: string): string | null;
  /** A short name for screens. */
  label(value: string): string;
  /** Whether tokenizers of this kind can carry a chat template (only then is a record rendered). */
  readonly chatTemplates: boolean;
  /** Loads the tokenizer; throws TokenizerError with a clear message. */
  load(value: string): Promise<Tokenizer>;
}

/** Every kind, asked in this order; the last claims every value the others leave. */
export const TOKENIZER_KINDS: readonly TokenizerKind[] = [encodingKind, modelFolderKind];

/** The kind that names `value`. */
export function tokenizerKindOf(value: string): TokenizerKind {
  const kind = TOKENIZER_KINDS.find((k) => k.claims(value));
  if (!kind) throw new TokenizerError(`Unknown tokenizer "${value}": give ${TOKENIZER_KINDS.map((k) => k.written).join(', or ')}.`);
  return kind;
}

/** The short name of a tokenizer value, for screens (an encoding's name, a model folder's own name). */
export function tokenizerLabel(value: string): string {
  try {
    return tokenizerKindOf(value).label(value);
  } catch {
    return value;
  }
}

/**
 * Validates a user's tokenizer value (`--tokenizer`, a setting, the project file) and returns what
 * to put in `CheckConfig.tokenizer`; `~/` reads against `home` when given, relative paths against
 * `baseDir`. Throws TokenizerError with a clear message. Loads nothing: a malformed file is
 * reported when it is loaded.
 */
export function resolveTokenizerValue(value: string, baseDir: string, home?: string): string {
  let v = value.trim();
  // `~/models/x` as a shell would read it, when the caller knows the home folder.
  if (home && (v === '~' || v.startsWith('~/'))) v = join(home, v.slice(1));
  if (v === '') throw new TokenizerError(`The tokenizer is empty: give ${TOKENIZER_KINDS.map((k) => k.written).join(', or ')}.`);
  return tokenizerKindOf(v).resolve(v, baseDir);
}
