// The watchdog for a check that runs in this thread (the CLI's --in-thread): a reader stuck in a
// synchronous loop blocks this thread's timers, so the watching happens in a small worker thread
// that shares a heartbeat counter. When no beat comes for the set time it writes one clear
// sentence to stderr, removes this process's temporary copies, and ends the process (SIGKILL: the
// blocked thread could never run a handler). The report is lost: only worker threads can stop a
// reader and keep what came before, which is why they are the default.

import { Worker } from 'node:worker_threads';
import { TEMP_PREFIX } from '../engine/sources/tempFiles.js';

const WATCHER = `
const { workerData } = require('node:worker_threads');
const { readdirSync, rmSync, writeSync } = require('node:fs');
const { join } = require('node:path');
const { tmpdir } = require('node:os');
const { shared, seconds, prefix, message } = workerData;
let last = Atomics.load(shared, 0);
let since = Date.now();
for (;;) {
  Atomics.wait(shared, 1, 0, 250);
  if (Atomics.load(shared, 1) !== 0) break;
  const now = Atomics.load(shared, 0);
  if (now !== last) { last = now; since = Date.now(); continue; }
  if (Date.now() - since < seconds * 1000) continue;
  try { writeSync(2, message); } catch {}
  try {
    for (const n of readdirSync(tmpdir())) if (n.startsWith(prefix)) rmSync(join(tmpdir(), n), { recursive: true, force: true });
  } catch {}
  process.kill(process.pid, 'SIGKILL');
}
`;

export interface ThreadWatchdog {
  /** Progress was made (a record, a byte). */
  beat(): void;
  stop(): void;
}

/** Starts watching; `seconds` ≤ 0 watches nothing. */
export function watchThisThread(seconds: number, what: string): ThreadWatchdog {
  if (!(seconds > 0)) return { beat: () => undefined, stop: () => undefined };
  const shared = new Int32Array(new SharedArrayBuffer(8));
  const message = `shardwise: stopped: no progress for ${seconds} s while checking ${what} in this thread (--in-thread); the process was ended and nothing was reported. Without --in-thread the reader runs in a worker that is stopped alone, and the report keeps what came before with a read-stalled finding.\n`;
  const w = new Worker(WATCHER, { eval: true, workerData: { shared, seconds, prefix: `${TEMP_PREFIX}${process.pid}-`, message } });
  w.unref();
  return {
    beat: () => void Atomics.add(shared, 0, 1),
    stop: () => {
      Atomics.store(shared, 1, 1);
      Atomics.notify(shared, 1);
    },
  };
}
