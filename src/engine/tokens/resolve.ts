// Naming a model folder: what a user writes (a setting, `--tokenizer`, the project file) checked and
// made absolute, without loading anything heavy — the extension host uses this too.

import { existsSync, statSync } from 'node:fs';
import { basename, isAbsolute, join, resolve } from 'node:path';
import { ENCODINGS } from '../config.js';
import { TokenizerError } from './tokenizer.js';

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
 * A model folder (or its tokenizer.json) named by a user, resolved against `baseDir` and checked to
 * exist and hold tokenizer.json; throws TokenizerError with a clear message.
 */
export function resolveModelFolder(value: string, baseDir: string): string {
  const path = isAbsolute(value) ? value : resolve(baseDir, value);
  const problem = modelFolderProblem(path);
  if (problem) {
    const hint = /^[a-z0-9_]+$/i.test(value) ? ` The built-in encodings are ${ENCODINGS.join(' and ')}.` : '';
    throw new TokenizerError(`Unknown tokenizer "${value}": ${problem}.${hint}`);
  }
  return path;
}

/** A model folder's short name: its own name, or for a hub cache snapshot the model's `org/name`. */
export function modelFolderLabel(value: string): string {
  const parts = value.replace(/[\\/]+$/, '').split(/[\\/]/);
  // A hub cache snapshot is `models--org--name/snapshots/<hash>`: the model's name says more than the hash.
  const snap = parts.lastIndexOf('snapshots');
  if (snap > 0 && /^models--/.test(parts[snap - 1] ?? '')) return parts[snap - 1]!.slice('models--'.length).replace(/--/g, '/');
  return parts[parts.length - 1] || value;
}
