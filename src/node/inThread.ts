// The same analysis as the worker pool, in this thread: for the CLI's --workers 0 (small files,
// debugging) — never loaded by the extension host.

import { analyzeSource, type EntryOutcome } from '../engine/analyze.js';
import { ALL_CHECKS } from '../engine/checks/index.js';
import { createSource } from '../engine/sources/index.js';
import { withFileFindingsOnce, type AnalyzeFileOptions } from './pool.js';
import { DEFAULT_STALL_SECONDS } from '../engine/sources/index.js';
import { watchThisThread } from './threadWatchdog.js';

export async function analyzeInThread(path: string, options: AnalyzeFileOptions): Promise<void> {
  const opts = withFileFindingsOnce(options);
  const source = createSource(path, opts.open ?? {});
  // A reader that spins here blocks this thread: a watcher thread ends the process instead of a hang.
  const watchdog = watchThisThread(opts.open?.stallSeconds ?? DEFAULT_STALL_SECONDS, path);
  try {
    opts.onInfo?.(await source.open(opts.signal));
    let batch: EntryOutcome[] = [];
    const broke = await analyzeSource(source, {
      config: opts.config,
      checks: ALL_CHECKS,
      signal: opts.signal,
      onProgress: (p) => {
        watchdog.beat();
        opts.onProgress?.(p);
      },
      onOutcome: (o) => {
        watchdog.beat();
        batch.push(o);
        if (batch.length >= 500) {
          opts.onOutcomes(batch);
          batch = [];
        }
      },
    });
    if (batch.length) opts.onOutcomes(batch);
    const after = source.info();
    opts.onInfo?.(broke ? { ...after, findings: [...after.findings, broke] } : after);
  } finally {
    watchdog.stop();
    await source.close().catch(() => undefined);
  }
}
