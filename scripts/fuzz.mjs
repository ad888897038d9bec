#!/usr/bin/env node
// npm run fuzz [-- --count N] [--seed S] [--reader jsonl,parquet,...] [--time-ms T] [--out DIR]
// Mutates golden and generated shards per reader and reads each case to the end in a pooled
// worker; any case that throws an unclear error, leaves an unhandled rejection, hangs or grows
// memory past the cap is written to DIR (default test-output/fuzz-failures) for a regression test.
// The release bar is 2,000+ cases per reader. Runs at a lowered priority: other work shares the cores.
import { setPriority } from 'node:os';
import { READERS, runFuzz } from './fuzz-core.mjs';
import { join, resolve, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);
const opt = (name, dflt) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 && args[i + 1] !== undefined ? args[i + 1] : dflt;
};
try {
  setPriority(10);
} catch {
  // Not allowed here: run at the usual priority.
}
const count = Number(opt('count', '2000'));
const seed = Number(opt('seed', String(Date.now() % 100000)));
const readers = opt('reader', READERS.join(',')).split(',');
const outDir = resolve(opt('out', join(root, 'test-output/fuzz-failures')));
const timeMs = Number(opt('time-ms', '15000'));
for (const r of readers) if (!READERS.includes(r)) throw new Error(`unknown reader "${r}" (one of ${READERS.join(', ')})`);
console.log(`fuzzing ${readers.join(', ')}: ${count} cases each, seed ${seed}, ${timeMs} ms a case; failures go to ${outDir}`);
const t = Date.now();
const { summary, recycled } = await runFuzz({ readers, count, seed, timeMs, outDir, log: (m) => console.log(`  FAIL ${m}`) });
let failed = 0;
for (const [reader, s] of Object.entries(summary)) {
  failed += s.failed;
  console.log(`${reader.padEnd(13)} ${String(s.cases).padStart(6)} cases  ${String(s.failed).padStart(4)} failed  ${String(s.errors).padStart(6)} clear errors  ${String(s.records).padStart(9)} entries read`);
}
console.log(`${((Date.now() - t) / 1000).toFixed(1)} s, worker replaced ${recycled} times; rerun a case with --seed ${seed}`);
process.exit(failed ? 1 : 0);
