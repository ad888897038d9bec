// Model folders already on disk in the local cache of the common model-hub client, for the
// tokenizer picker. Only the disk is looked at, and only under the cache root.
// The cache's shape (from memory of the client's documentation): `<root>/models--<org>--<name>/
// snapshots/<revision>/<files>`, `refs/<branch>` holding the revision a branch points at; the root
// is HF_HUB_CACHE, else HF_HOME/hub, else $XDG_CACHE_HOME/huggingface/hub, else ~/.cache/huggingface/hub.

import * as nodeFs from 'node:fs';
import { join } from 'node:path';

/** The few file-system calls the search makes, so a test can watch every path it touches. */
export interface CacheFs {
  readdirSync(path: string): string[];
  existsSync(path: string): boolean;
  readFileSync(path: string, encoding: 'utf8'): string;
}

export interface CachedModel {
  /** `org/name`, with the revision's first characters when the cache holds several. */
  label: string;
  /** The snapshot folder holding tokenizer.json. */
  folder: string;
  /** The model's id as the hub names it (`org/name`). */
  model: string;
  revision: string;
  /** True when a branch (e.g. `main`) points at this revision. */
  current: boolean;
}

type Env = Readonly<Record<string, string | undefined>>;

/** The cache root the client would use, from its usual environment variables, else its default under `home`. */
export function hubCacheRoot(env: Env, home: string): string {
  const set = (k: string) => (env[k] && env[k]!.trim() !== '' ? env[k]! : null);
  const direct = set('HF_HUB_CACHE') ?? set('HUGGINGFACE_HUB_CACHE');
  if (direct) return direct;
  const hfHome = set('HF_HOME') ?? join(set('XDG_CACHE_HOME') ?? join(home, '.cache'), 'huggingface');
  return join(hfHome, 'hub');
}

/** Every snapshot folder under the cache root that holds tokenizer.json; nothing outside the root is read. */
export function findCachedModels(env: Env, home: string, fs: CacheFs = nodeFs as unknown as CacheFs): CachedModel[] {
  const root = hubCacheRoot(env, home);
  const list = (p: string): string[] => {
    try {
      return fs.readdirSync(p).sort();
    } catch {
      return [];
    }
  };
  const out: CachedModel[] = [];
  for (const repo of list(root)) {
    const m = /^models--(.+)$/.exec(repo);
    if (!m) continue;
    const model = m[1]!.split('--').join('/');
    const repoDir = join(root, repo);
    const current = new Set<string>();
    for (const ref of list(join(repoDir, 'refs'))) {
      try {
        current.add(fs.readFileSync(join(repoDir, 'refs', ref), 'utf8').trim());
      } catch {
        // A ref that cannot be read names no revision.
      }
    }
    const found: CachedModel[] = [];
    for (const revision of list(join(repoDir, 'snapshots'))) {
      const folder = join(repoDir, 'snapshots', revision);
      if (!fs.existsSync(join(folder, 'tokenizer.json'))) continue;
      found.push({ label: model, folder, model, revision, current: current.has(revision) });
    }
    if (found.length > 1) for (const f of found) f.label = `${model} @ ${f.revision.slice(0, 8)}`;
    // The revision a branch points at first.
    found.sort((a, b) => Number(b.current) - Number(a.current));
    out.push(...found);
  }
  return out;
}
