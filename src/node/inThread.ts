// The same analysis as the worker pool, in this thread: for the CLI's --workers 0 (small files,
// debugging) — never loaded by the extension host.

import { analyzeSource, type EntryOutcome } from '../engine/analyze.js';
import { ALL_CHECKS } from '../engine/checks/index.js';
import { createSource } from '../engine/sources/index.js';
import { withFileFindingsOnce, type AnalyzeFileOptions } from './pool.js';

export async function analyzeInThread(path: string, options: AnalyzeFileOptions): Promise<void> {
  const opts = withFileFindingsOnce(options);
  const source = createSource(path, opts.open ?? {});
  try {
    opts.onInfo?.(await source.open(opts.signal));
    let batch: EntryOutcome[] = [];
    const broke = await analyzeSource(source, {
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
    });
    if (batch.length) opts.onOutcomes(batch);
    const after = source.info();
    opts.onInfo?.(broke ? { ...after, findings: [...after.findings, broke] } : after);
  } finally {
    await source.close().catch(() => undefined);
  }
}
