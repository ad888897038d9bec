// What the command line's arguments name: files, folders walked for every data file the engine
// reads (known by their bytes), glob patterns, and folders a Python dataset library wrote with
// `save_to_disk` (checked as one data set, each split named).

import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { basename, join, relative, resolve, sep } from 'node:path';
import { globToRegExp } from '../engine/globs.js';
import { isShardFile } from '../engine/sources/index.js';

export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}

export interface InputFile {
  /** As printed: the argument itself for a named file, else the path found under the folder. */
  path: string;
  /** The split of a saved data set, where the file belongs to one. */
  split?: string;
}

/** Folders never walked into: version control, tool caches, installed packages. */
const SKIP_DIRS = new Set(['node_modules', '__pycache__']);

/** Metadata files that sit beside shards and are never records. */
const METADATA_NAMES = new Set(['shardwise.json', 'dataset_info.json', 'state.json', 'dataset_dict.json', 'package.json', 'package-lock.json', 'tsconfig.json']);

const hasGlob = (s: string) => /[*?[]/.test(s);

/** Expands every argument, in order; a file reached twice is checked once, at its first place. */
export function expandInputs(args: readonly string[]): InputFile[] {
  const out: InputFile[] = [];
  const seen = new Set<string>();
  const push = (f: InputFile) => {
    const key = resolve(f.path);
    if (seen.has(key)) return;
    seen.add(key);
    out.push(f);
  };
  for (const arg of args) {
    let st;
    try {
      st = statSync(arg);
    } catch (err) {
      if (hasGlob(arg)) {
        const hits = expandGlob(arg);
        if (hits.length === 0) throw new InputError(`${arg}: the pattern matches no data file`);
        hits.forEach(push);
        continue;
      }
      const code = (err as NodeJS.ErrnoException).code;
      throw new InputError(`${arg}: ${code === 'ENOENT' ? 'no such file or folder' : `cannot open (${code})`}`);
    }
    if (st.isDirectory()) {
      const found = walkFolder(arg);
      if (found.length === 0) throw new InputError(`${arg}: the folder holds no data file Shardwise reads`);
      found.forEach(push);
    } else push({ path: arg });
  }
  return out;
}

/** Every data file under a folder, in path order; a saved data set's folder gives its splits' files. */
export function walkFolder(dir: string): InputFile[] {
  const saved = savedDataset(dir);
  if (saved) return saved;
  const out: InputFile[] = [];
  for (const e of listFolder(dir, true)) {
    if (e.dir) out.push(...walkFolder(e.path));
    else if (e.size > 0 && isDataFile(e.path)) out.push({ path: e.path });
  }
  return out;
}

/** A folder's visible entries in name order (hidden ones and package folders left out). */
function listFolder(dir: string, strict: boolean): { name: string; path: string; dir: boolean; size: number }[] {
  let names: string[];
  try {
    names = readdirSync(dir).sort();
  } catch (err) {
    if (strict) throw new InputError(`${dir}: cannot list the folder (${(err as NodeJS.ErrnoException).code})`);
    return [];
  }
  const out: { name: string; path: string; dir: boolean; size: number }[] = [];
  for (const name of names) {
    if (name.startsWith('.')) continue;
    const path = join(dir, name);
    try {
      const st = statSync(path);
      if (st.isDirectory() && !SKIP_DIRS.has(name)) out.push({ name, path, dir: true, size: 0 });
      else if (st.isFile()) out.push({ name, path, dir: false, size: st.size });
    } catch {
      // Vanished or unreadable while listing: not an input.
    }
  }
  return out;
}

/** Whether a file found in a folder is a shard: known by its bytes, and not a metadata document. */
export function isDataFile(path: string): boolean {
  const name = basename(path);
  if (METADATA_NAMES.has(name) || name.endsWith('.schema.json')) return false;
  return isShardFile(path);
}

/**
 * A folder written by the common Python dataset library's `save_to_disk` (from memory of its
 * layout: a split folder holds `state.json` listing `_data_files` as Arrow streams, with
 * `dataset_info.json` beside them; a dictionary of splits holds `dataset_dict.json` naming
 * `splits`, one folder each). Null when the folder is not one.
 */
export function savedDataset(dir: string): InputFile[] | null {
  const dict = join(dir, 'dataset_dict.json');
  if (existsSync(dict)) {
    const doc = readJson(dict);
    const splits = Array.isArray(doc?.splits) ? (doc.splits as unknown[]).filter((s): s is string => typeof s === 'string') : null;
    if (!splits) throw new InputError(`${dict}: a saved data set's split list must name its splits ("splits": [...])`);
    return splits.flatMap((s) => {
      const files = savedSplit(join(dir, s), s);
      if (!files) throw new InputError(`${join(dir, s)}: split "${s}" named in dataset_dict.json has no state.json`);
      return files;
    });
  }
  return savedSplit(dir, null);
}

function savedSplit(dir: string, name: string | null): InputFile[] | null {
  const statePath = join(dir, 'state.json');
  if (!existsSync(statePath)) return null;
  const state = readJson(statePath);
  const files = Array.isArray(state?._data_files) ? (state._data_files as { filename?: unknown }[]) : null;
  if (!files) throw new InputError(`${statePath}: a saved data set's state must list its "_data_files"`);
  const split = name ?? (typeof state?._split === 'string' && state._split ? state._split : basename(resolve(dir)));
  return files.map((f) => {
    if (typeof f?.filename !== 'string' || f.filename.includes('..')) throw new InputError(`${statePath}: a data file entry has no usable "filename"`);
    const p = join(dir, f.filename);
    if (!existsSync(p)) throw new InputError(`${p}: listed in ${statePath} but missing`);
    return { path: p, split };
  });
}

function readJson(path: string): Record<string, unknown> | null {
  try {
    const v = JSON.parse(readFileSync(path, 'utf8'));
    return v !== null && typeof v === 'object' ? (v as Record<string, unknown>) : null;
  } catch (e) {
    throw new InputError(`${path}: not valid JSON (${(e as Error).message})`);
  }
}

/** Files matching a glob (`**` any folders, `*` within a name), from its longest plain prefix. */
export function expandGlob(pattern: string): InputFile[] {
  const parts = pattern.split(/[\\/]/);
  const fixed: string[] = [];
  while (parts.length > 1 && !hasGlob(parts[0])) fixed.push(parts.shift()!);
  const base = fixed.length ? fixed.join(sep) || sep : '.';
  const re = globToRegExp(parts.join('/'));
  if (!existsSync(base)) return [];
  const out: InputFile[] = [];
  const visit = (dir: string) => {
    for (const e of listFolder(dir, false)) {
      const rel = relative(base, e.path).split(sep).join('/');
      if (e.dir) visit(e.path);
      else if (re.test(rel) && isDataFile(e.path)) out.push({ path: fixed.length ? e.path : rel });
    }
  };
  visit(base);
  return out;
}
