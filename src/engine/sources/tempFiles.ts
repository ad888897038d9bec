// Temporary copies of decompressed shards: named after the process that made them, so the process
// (main thread or any of its workers) removes its own on exit, Ctrl+C or SIGTERM, and any later
// Shardwise process removes those a killed one left behind. Free disk space is checked as they grow.

import { readdirSync, rmSync, statfsSync } from 'node:fs';
import { mkdtemp, statfs } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { isMainThread } from 'node:worker_threads';

/** Every temporary folder's name starts with this, then the process id. */
export const TEMP_PREFIX = 'shardwise-';
const PREFIX = TEMP_PREFIX;

/** Free space a temporary copy always leaves on its disk. */
export const MIN_FREE_BYTES = 512 * 1024 * 1024;

/** A folder of our own under the system's temporary folder, removed when this process ends. */
export async function makeTempDir(kind: string): Promise<string> {
  installTempCleanup();
  return mkdtemp(join(tmpdir(), `${PREFIX}${process.pid}-${kind}-`));
}

function pidOf(name: string): number | null {
  const m = /^shardwise-(\d+)-/.exec(name);
  return m ? Number(m[1]) : null;
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Removes this process's temporary folders (and, with `stale`, those of processes no longer running). */
export function sweepTempDirs(stale = false): string[] {
  const removed: string[] = [];
  let names: string[];
  try {
    names = readdirSync(tmpdir());
  } catch {
    return removed;
  }
  for (const n of names) {
    const pid = pidOf(n);
    if (pid === null) continue;
    if (pid === process.pid || (stale && !alive(pid))) {
      try {
        rmSync(join(tmpdir(), n), { recursive: true, force: true });
        removed.push(n);
      } catch {
        // In use by another thread's open handle on some systems; the next sweep takes it.
      }
    }
  }
  return removed;
}

let installed = false;

/**
 * On the main thread: remove this process's copies on exit, and on SIGINT / SIGTERM / SIGHUP
 * before the signal's usual effect (re-raised when nobody else handles it). Workers share the
 * process id, so the main thread's sweep takes their copies too.
 */
export function installTempCleanup(): void {
  if (installed || !isMainThread || typeof process?.on !== 'function') return;
  installed = true;
  sweepTempDirs(true);
  process.on('exit', () => sweepTempDirs());
  for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
    const others = process.listenerCount(sig);
    const handler = () => {
      sweepTempDirs();
      // With no other handler, keep the signal's default effect: end the process as it would have.
      if (others === 0 && process.listenerCount(sig) === 1) {
        process.removeListener(sig, handler);
        process.kill(process.pid, sig);
      }
    };
    process.on(sig, handler);
  }
}

/** Free bytes on the disk holding `dir`, or Infinity where the system cannot say. */
export async function freeBytes(dir: string): Promise<number> {
  try {
    const s = await statfs(dir);
    return Number(s.bavail) * Number(s.bsize);
  } catch {
    return Number.POSITIVE_INFINITY;
  }
}

export function freeBytesSync(dir: string): number {
  try {
    const s = statfsSync(dir);
    return Number(s.bavail) * Number(s.bsize);
  } catch {
    return Number.POSITIVE_INFINITY;
  }
}

/** Thrown when a temporary copy would leave less than MIN_FREE_BYTES on its disk. */
export class DiskSpaceError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'DiskSpaceError';
  }
}
