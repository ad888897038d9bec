// The results of checked shards, kept in the extension's storage: reopening a checked shard shows
// its full report at once. Keyed by path, size, modification time and the settings that shaped
// them; bounded in size, the least recently used going first. A changed file or a changed setting
// gives another key, so it is checked again.

import { createHash } from 'node:crypto';
import { mkdir, readdir, readFile, rm, stat, utimes, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { CheckConfig } from '../engine/config.js';
import { stableJson } from '../engine/policy.js';
import type { TallySnapshot } from '../engine/stats/tally.js';

export interface KeptResults {
  key: string;
  tally: TallySnapshot;
  /** Record index → entry. */
  recordEntry: number[];
  /** The source's finished line index (text shards), so reopening does not read the file to index it. */
  index?: unknown;
}

/** Bytes of kept results at most (common practice for caches: a bound, least recently used out). */
export const KEPT_MAX_BYTES = 256 * 1024 * 1024;

export class ResultsStore {
  constructor(
    private readonly dir: string,
    private readonly maxBytes = KEPT_MAX_BYTES,
  ) {}

  /** The key of a local file's results under a configuration, or null when the file cannot be read. */
  static async keyFor(path: string, config: CheckConfig): Promise<string | null> {
    try {
      const st = await stat(path);
      return stableJson({ v: 1, path, size: st.size, mtimeMs: st.mtimeMs, config: { ...config, shardLayout: undefined, baseDir: undefined } });
    } catch {
      return null;
    }
  }

  private fileOf(key: string): string {
    return join(this.dir, `${createHash('sha256').update(key).digest('hex').slice(0, 40)}.json`);
  }

  async get(key: string): Promise<KeptResults | null> {
    const file = this.fileOf(key);
    try {
      const kept = JSON.parse(await readFile(file, 'utf8')) as KeptResults;
      if (kept.key !== key) return null;
      // Touch it: least recently used goes first.
      const now = new Date();
      await utimes(file, now, now).catch(() => undefined);
      return kept;
    } catch {
      return null;
    }
  }

  async put(kept: KeptResults): Promise<void> {
    const text = JSON.stringify(kept);
    if (text.length > this.maxBytes / 2) return; // one shard never takes most of the room
    await mkdir(this.dir, { recursive: true });
    await writeFile(this.fileOf(kept.key), text);
    await this.evict();
  }

  /** Drops the least recently used results until the rest fit. */
  async evict(): Promise<void> {
    let names: string[];
    try {
      names = (await readdir(this.dir)).filter((n) => n.endsWith('.json'));
    } catch {
      return;
    }
    const files = await Promise.all(
      names.map(async (n) => {
        const st = await stat(join(this.dir, n)).catch(() => null);
        return st ? { path: join(this.dir, n), size: st.size, used: st.mtimeMs } : null;
      }),
    );
    const live = files.filter((f): f is { path: string; size: number; used: number } => f !== null).sort((a, b) => b.used - a.used);
    let total = 0;
    for (const f of live) {
      total += f.size;
      if (total > this.maxBytes) await rm(f.path, { force: true });
    }
  }
}
