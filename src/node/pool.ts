// Runs a whole-file analysis across worker threads (or in this thread when asked), streaming
// outcomes and progress, cancellable.

import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { abortError, analyzeSource, readFailedFinding, isFatal, type EntryOutcome, type Share } from '../engine/analyze.js';
import { ALL_CHECKS } from '../engine/checks/index.js';
import type { CheckConfig } from '../engine/config.js';
import { createSource, type OpenOptions } from '../engine/sources/index.js';
import type { Progress, SourceInfo } from '../engine/sources/source.js';
import type { Finding } from '../engine/findings.js';
import type { WorkerEvent, WorkerRequest } from './messages.js';

export interface AnalyzeFileOptions {
  config: CheckConfig;
  open?: OpenOptions;
  /** Worker threads to use; 0 runs in this thread (tests, tiny files). */
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

export async function analyzeFile(path: string, options: AnalyzeFileOptions): Promise<void> {
  const seen = new Set<string>();
  const opts: AnalyzeFileOptions = {
    ...options,
    onInfo: (info) => {
      options.onInfo?.(info);
      const fresh = info.findings.filter((f) => {
        const key = `${f.rule}|${f.entry}|${f.line}|${f.column}|${f.message}`;
        if (seen.has(key)) return false;
        seen.add(key);
        return true;
      });
      if (fresh.length) options.onFileFindings?.(fresh);
    },
  };
  const workers = opts.workers ?? defaultWorkerCount();
  if (workers <= 0) return analyzeHere(path, opts);
  const block = opts.block ?? 256;
  const shares: Share[] = Array.from({ length: workers }, (_, i) => ({ index: i, count: workers, block }));
  const progress = new Array<Progress | null>(workers).fill(null);
  const threads: Worker[] = [];
  const cleanup = () => {
    for (const t of threads) void t.terminate();
  };
  try {
    await Promise.all(
      shares.map(
        (share, i) =>
          new Promise<void>((resolve, reject) => {
            if (opts.signal?.aborted) return reject(abortError());
            const w = new Worker(opts.workerScript ?? workerScriptPath());
            threads.push(w);
            const onAbort = () => reject(abortError());
            opts.signal?.addEventListener('abort', onAbort, { once: true });
            w.on('message', (ev: WorkerEvent) => {
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
                  opts.onOutcomes(ev.outcomes);
                  break;
                case 'done':
                  opts.signal?.removeEventListener('abort', onAbort);
                  resolve();
                  break;
                case 'error': {
                  const e = new Error(ev.message);
                  e.name = ev.name;
                  reject(e);
                  break;
                }
              }
            });
            w.on('error', reject);
            w.on('exit', (code) => {
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

async function analyzeHere(path: string, opts: AnalyzeFileOptions): Promise<void> {
  const source = createSource(path, opts.open ?? {});
  try {
    const info = await source.open(opts.signal);
    opts.onInfo?.(info);
    let batch: EntryOutcome[] = [];
    let broke: Finding | null = null;
    await analyzeSource(source, {
      config: opts.config,
      checks: ALL_CHECKS,
      signal: opts.signal,
      onProgress: opts.onProgress,
      onOutcome: (o) => {
        batch.push(o);
        if (batch.length >= 500) {
          opts.onOutcomes(batch);
          batch = [];
        }
      },
    }).catch((err) => {
      if (isFatal(err)) throw err;
      broke = readFailedFinding(err);
    });
    if (batch.length) opts.onOutcomes(batch);
    const last = source.info();
    opts.onInfo?.(broke ? { ...last, findings: [...last.findings, broke] } : last);
  } finally {
    await source.close().catch(() => undefined);
  }
}
