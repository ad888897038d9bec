// Naming a tokenizer: what a user writes (a setting, `--tokenizer`, the project file) checked and
// made absolute, without loading anything heavy — the extension host uses this too.

import { existsSync, statSync } from 'node:fs';
import { basename, isAbsolute, join, resolve } from 'node:path';
import { isEncodingName, TokenizerError } from './tokenizer.js';

/** Checks, without reading it whole, that `folder` is a model folder; returns a clear problem or null. */
export function modelFolderProblem(folder: string): string | null {
  let st;
  try {
    st = statSync(folder);
  } catch {
    return `the model folder "${folder}" does not exist`;
  }
  if (!st.isDirectory()) {
    return basename(folder) === 'tokenizer.json' ? null : `"${folder}" is not a folder (a model folder holds tokenizer.json)`;
  }
  if (!existsSync(join(folder, 'tokenizer.json'))) return `the folder "${folder}" holds no tokenizer.json (only tokenizer.json models are read)`;
  return null;
}

/**
 * Validates a user's tokenizer value (`--tokenizer`, a setting, the project file): a built-in
 * encoding name, or a model folder (or its tokenizer.json) resolved against `baseDir` (`~/`
 * against `home` when given). Returns what to put in `CheckConfig.tokenizer`; throws
 * TokenizerError with a clear message. Only checks that the folder exists and holds
 * tokenizer.json; a malformed file is reported when it is loaded.
 */
export function resolveTokenizerValue(value: string, baseDir: string, home?: string): string {
  let v = value.trim();
  // `~/models/x` as a shell would read it, when the caller knows the home folder.
  if (home && (v === '~' || v.startsWith('~/'))) v = join(home, v.slice(1));
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
