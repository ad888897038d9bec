// The --in-thread watchdog: a reader that blocks the thread is ended by the watcher thread with a
// clear sentence and its temporary folder removed; a slow reader that keeps making progress is not.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { build } from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

let dir = '';
let child = '';
beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-watchdog-'));
  child = join(dir, 'child.cjs');
  await build({ entryPoints: [join(__dirname, 'watchdog-child.ts')], outfile: child, bundle: true, platform: 'node', format: 'cjs', logLevel: 'error' });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('watchdog for a check in this thread', () => {
  it('a thread stuck in a loop is ended after the set time, says why, and leaves no temporary folder', () => {
    const started = Date.now();
    const r = spawnSync(process.execPath, [child, 'spin'], { encoding: 'utf8', timeout: 30_000 });
    const took = Date.now() - started;
    const temp = r.stdout.trim();
    try {
      expect(r.signal).toBe('SIGKILL');
      expect(took).toBeLessThan(15_000);
      expect(r.stderr).toContain('stopped: no progress for 1 s while checking a-shard.jsonl in this thread');
      expect(temp).toContain('shardwise-');
      expect(existsSync(temp)).toBe(false);
    } finally {
      // Where the watchdog failed to remove it, the test does (the child names it on its first line).
      if (temp.startsWith(join(tmpdir(), 'shardwise-'))) rmSync(temp, { recursive: true, force: true });
    }
  });

  it('a slow reader that keeps making progress is left alone', () => {
    const r = spawnSync(process.execPath, [child, 'beat'], { encoding: 'utf8', timeout: 30_000 });
    expect(r.status).toBe(0);
    expect(r.stdout).toBe('finished\n');
    expect(r.stderr).toBe('');
  });
});
