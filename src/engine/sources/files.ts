// Whether a file a record names exists beside the shard: the one look at the disk the checks make.

import { statSync } from 'node:fs';
import { isAbsolute, join, normalize } from 'node:path';

const seen = new Map<string, boolean>();

/** True when `rel` (relative to `baseDir`) is an existing file. Cached: shards repeat their media. */
export function relativeFileExists(baseDir: string, rel: string): boolean {
  const key = `${baseDir}\u0000${rel}`;
  let hit = seen.get(key);
  if (hit === undefined) {
    try {
      hit = statSync(join(baseDir, normalize(rel))).isFile();
    } catch {
      hit = false;
    }
    if (seen.size > 100_000) seen.clear();
    seen.set(key, hit);
  }
  return hit;
}

/** A location that names a file relative to the shard (not a URL, not an absolute path). */
export function isRelativePath(location: string): boolean {
  if (location === '' || isAbsolute(location) || /^[a-z][a-z0-9+.-]*:/i.test(location) || location.startsWith('\\\\')) return false;
  return true;
}
