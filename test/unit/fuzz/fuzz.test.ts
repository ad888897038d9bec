// The fuzzing harness, briefly and with fixed seeds: every reader (JSON Lines, gzip JSON Lines,
// Parquet, Arrow file, Arrow stream) on mutated golden files (../shared/testdata: JSONTestSuite,
// parquet-testing, arrow-testing) and generated ones. Each case must end in records or a clear
// error within the time bound, with no uncaught exception, unhandled rejection or memory growth
// past the cap. `npm run fuzz` runs the long version; what it finds is kept in cases/ below.
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
// @ts-expect-error: a plain JavaScript module of the scripts folder, without types
import { READERS, runFuzz, runSaved } from '../../../scripts/fuzz-core.mjs';

const TIME_MS = 10_000;
const MEM_BYTES = 1 << 30;

interface Summary {
  cases: number;
  failed: number;
  failures: { name: string; kind: string; failures: string[] }[];
}

describe('cases the fuzzer found, kept as regressions (test/unit/fuzz/cases)', () => {
  it('each saved input now ends cleanly and quickly', async () => {
    const results: { name: string; failures: string[]; ms: number }[] = await runSaved(join(__dirname, 'cases'), { timeMs: TIME_MS, memBytes: MEM_BYTES });
    expect(results.length).toBeGreaterThanOrEqual(12);
    for (const r of results) {
      expect(r.failures, r.name).toEqual([]);
      expect(r.ms, r.name).toBeLessThan(TIME_MS);
    }
  });
});

describe('a short fixed-seed run: 200 cases per reader', () => {
  it('no case fails', async () => {
    const { summary } = (await runFuzz({ count: 200, seed: 20261202, timeMs: TIME_MS, memBytes: MEM_BYTES })) as { summary: Record<string, Summary> };
    expect(Object.keys(summary)).toEqual(READERS);
    for (const [reader, s] of Object.entries(summary)) {
      expect(s.cases, reader).toBe(200);
      expect(s.failures.map((f) => `${f.name} (${f.kind}): ${f.failures[0]}`), reader).toEqual([]);
    }
  });
});
