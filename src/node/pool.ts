// Runs a whole-file analysis across worker threads, streaming outcomes and progress, cancellable.
// The checks themselves load only in the workers (and in `inThread.ts` for the CLI's --workers 0),
// so the extension host never parses them.

import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { type EntryOutcome, type Share } from '../engine/analyze.js';
import { CancelledError, errorFromWire } from '../engine/errors.js';
import type { CheckConfig } from '../engine/config.js';
import type { OpenOptions } from '../engine/sources/index.js';
import type { Progress, SourceInfo } from '../engine/sources/source.js';
import type { Finding } from '../engine/findings.js';
import type { WorkerEvent, WorkerRequest } from './messages.js';
import { applyPolicyAll } from '../engine/policy.js';
import { DEFAULT_STALL_SECONDS } from '../engine/sources/index.js';
import { jsonlRule } from '../engine/sources/jsonlRules.js';
import { installTempCleanup } from '../engine/sources/tempFiles.js';
import { OutcomeSequencer } from './sequencer.js';

/** The finding a stopped read leaves: the message names how long it waited and how far it got. */
export function stalledFinding(seconds: number, entries: number): Finding {
  const r = jsonlRule('read-stalled');
  return {
    rule: 'read-stalled',
    family: r.family,
    severity: r.severity,
    message: `stopped: no progress for ${seconds} s after ${entries} entries (no record, no byte read); the reader was ended and what came before was checked`,
    record: null,
    line: null,
    column: null,
    pointer: null,
    entry: null,
  };
}

export interface AnalyzeFileOptions {
  config: CheckConfig;
  open?: OpenOptions;
  /** Worker threads to use (at least 1). */
  workers?: number;
  /** Entries per block handed round-robin to the workers. */
  block?: number;
  signal?: AbortSignal;
  onInfo?: (info: SourceInfo) => void;
  /** Findings about the file as a whole (from opening it, or found only after a full pass), each once. */
  onFileFindings?: (findings: Finding[]) => void;
  onProgress?: (p: Progress) => void;
  onOutcomes: (o: EntryOutcome[]) => void;
  /** Where dist/worker.js lives (defaults to beside this bundle). */
  workerScript?: string;
}

export function defaultWorkerCount(): number {
  return Math.max(1, Math.min(4, availableParallelism()));
}

export function workerScriptPath(): string {
  return join(__dirname, 'worker.js');
}

/** Passes each finding about the file as a whole on once, however many workers report it. */
export function withFileFindingsOnce(options: AnalyzeFileOptions): AnalyzeFileOptions {
  const seen = new Set<string>();
  return {
    ...options,
    onInfo: (info) => {
      options.onInfo?.(info);
      const fresh = info.findings.filter((f) => {
        const key = `${f.rule}|${f.entry}|${f.line}|${f.column}|${f.message}`;
        if (seen.has(key)) return false;
        seen.add(key);
        return true;
      });
      const kept = applyPolicyAll(fresh, options.config.rules);
      if (kept.length) options.onFileFindings?.(kept);
    },
  };
}

export async function analyzeFile(path: string, options: AnalyzeFileOptions): Promise<void> {
  installTempCleanup();
  const opts = withFileFindingsOnce(options);
  const stallSeconds = opts.open?.stallSeconds ?? DEFAULT_STALL_SECONDS;
  let stalled = false;
  const workers = Math.max(1, opts.workers ?? defaultWorkerCount());
  const block = opts.block ?? 256;
  const shares: Share[] = Array.from({ length: workers }, (_, i) => ({ index: i, count: workers, block }));
  const progress = new Array<Progress | null>(workers).fill(null);
  // Record numbers are set here, in entry order, from every share's outcomes.
  const sequencer = new OutcomeSequencer(workers, block, (os) => opts.onOutcomes(os));
  const threads: Worker[] = [];
  const cleanup = () => {
    for (const t of threads) void t.terminate();
  };
  try {
    await Promise.all(
      shares.map(
        (share, i) =>
          new Promise<void>((resolve, reject) => {
            if (opts.signal?.aborted) return reject(new CancelledError());
            const w = new Worker(opts.workerScript ?? workerScriptPath());
            threads.push(w);
            // The watchdog: a worker that reports no new record and no new byte for the set
            // time is ended, and its share stops with a read-stalled finding instead of hanging.
            let lastMove = Date.now();
            let lastDone = -1;
            let lastEntries = -1;
            let seen = 0;
            const timer =
              stallSeconds > 0
                ? setInterval(() => {
                    if (Date.now() - lastMove < stallSeconds * 1000) return;
                    clearInterval(timer);
                    void w.terminate();
                    sequencer.finish(i);
                    if (!stalled) {
                      stalled = true;
                      opts.onFileFindings?.(applyPolicyAll([stalledFinding(stallSeconds, Math.max(seen, lastEntries))], opts.config.rules));
                    }
                    resolve();
                  }, Math.min(1000, stallSeconds * 250))
                : undefined;
            const settle = () => clearInterval(timer);
            const onAbort = () => {
              settle();
              reject(new CancelledError());
            };
            opts.signal?.addEventListener('abort', onAbort, { once: true });
            w.on('message', (ev: WorkerEvent) => {
              if (ev.kind === 'progress') {
                if (ev.progress.done !== lastDone || ev.progress.entries !== lastEntries) lastMove = Date.now();
                lastDone = ev.progress.done;
                lastEntries = ev.progress.entries;
              } else if (ev.kind === 'outcomes') {
                lastMove = Date.now();
                seen += ev.outcomes.length;
              } else lastMove = Date.now();
              switch (ev.kind) {
                case 'info':
                  opts.onInfo?.(ev.info);
                  break;
                case 'progress': {
                  progress[i] = ev.progress;
                  const known = progress.filter((p): p is Progress => p !== null);
                  // The slowest share sets the pace: report the least advanced one.
                  const slowest = known.reduce((a, b) => (a.done / (a.total || 1) <= b.done / (b.total || 1) ? a : b));
                  opts.onProgress?.(slowest);
                  break;
                }
                case 'outcomes':
                  sequencer.push(i, ev.outcomes);
                  break;
                case 'done':
                  sequencer.finish(i);
                  settle();
                  opts.signal?.removeEventListener('abort', onAbort);
                  resolve();
                  break;
                case 'error': {
                  settle();
                  reject(errorFromWire(ev.errorKind, ev.message));
                  break;
                }
              }
            });
            w.on('error', (e) => {
              settle();
              reject(e);
            });
            w.on('exit', (code) => {
              settle();
              if (code !== 0) reject(new Error(`analysis worker stopped unexpectedly (exit code ${code})`));
            });
            const req: WorkerRequest = { id: 1, op: 'analyze', path, config: opts.config, share, open: opts.open ?? {} };
            w.postMessage(req);
          }),
      ),
    );
  } finally {
    cleanup();
  }
}
