#!/usr/bin/env node
// Hostile sizes through the built CLI, as memory and time ratios against references measured in
// the same run: 10 million tiny bad lines against 1 million (bounded memory means the ratio of
// peak memory stays near 1 while time grows about tenfold), and one 500 MB line against a plain
// chunked read of the same file. Files are generated into a temporary folder and deleted after.
// node scripts/fuzz-limits.mjs [--lines N] [--line-mib M]
import { execFileSync, spawnSync } from 'node:child_process';
import { createWriteStream, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);
const opt = (n, d) => (args.includes(`--${n}`) ? Number(args[args.indexOf(`--${n}`) + 1]) : d);
const lines = opt('lines', 10_000_000);
const lineMiB = opt('line-mib', 500);
const dir = mkdtempSync(join(tmpdir(), 'shardwise-limits-'));

async function writeRepeated(path, piece, times) {
  const out = createWriteStream(path);
  const block = piece.repeat(Math.max(1, Math.floor((1 << 20) / piece.length)));
  const per = block.length / piece.length;
  for (let k = 0; k < times; k += per) {
    const chunk = k + per <= times ? block : piece.repeat(times - k);
    if (!out.write(chunk)) await new Promise((r) => out.once('drain', r));
  }
  await new Promise((r) => out.end(r));
}

/** Runs node with a preload that prints the process's peak resident memory at exit. */
function measure(argv) {
  const t = Date.now();
  const r = spawnSync(process.execPath, ['-r', join(dir, 'rss.cjs'), ...argv], { encoding: 'utf8', maxBuffer: 1 << 28 });
  const m = /MAXRSS (\d+)/.exec(r.stderr);
  return { ms: Date.now() - t, rssMiB: m ? Number(m[1]) / 1024 : NaN, status: r.status, out: r.stdout };
}

try {
  writeFileSync(join(dir, 'rss.cjs'), 'process.on("exit",()=>process.stderr.write("MAXRSS "+process.resourceUsage().maxRSS+"\\n"))');
  execFileSync(process.execPath, [join(root, 'scripts/build.mjs'), '--outdir', join(dir, 'build')], { stdio: 'pipe' });
  const cli = join(dir, 'build', 'cli.js');
  const check = (file) => measure([cli, 'check', file, '--format', 'json', '--quiet']);

  const small = join(dir, 'tiny-ref.jsonl');
  const big = join(dir, 'tiny.jsonl');
  await writeRepeated(small, 'x\n', Math.floor(lines / 10));
  await writeRepeated(big, 'x\n', lines);
  const a = check(small);
  const b = check(big);
  const listed = JSON.parse(b.out).files[0];
  console.log(`tiny bad lines: ${lines / 10} lines ${a.rssMiB.toFixed(0)} MiB in ${(a.ms / 1000).toFixed(1)} s; ${lines} lines ${b.rssMiB.toFixed(0)} MiB in ${(b.ms / 1000).toFixed(1)} s`);
  console.log(`  peak memory ratio ${(b.rssMiB / a.rssMiB).toFixed(2)} for 10x the lines (time ratio ${(b.ms / a.ms).toFixed(1)}); findings listed ${listed.findings.length} of ${listed.findingsTotal}; exit ${b.status}`);

  const long = join(dir, 'long.jsonl');
  await writeRepeated(long, 'a', lineMiB << 20);
  writeFileSync(join(dir, 'plain.cjs'), 'const fs=require("fs");const fd=fs.openSync(process.argv[2],"r");const b=Buffer.alloc(4<<20);let n=0,k;while((k=fs.readSync(fd,b,0,b.length,null))>0)n+=k;');
  const ref = measure([join(dir, 'plain.cjs'), long]);
  const c = check(long);
  const rules = Object.keys(JSON.parse(c.out).files[0].findingsByRule);
  console.log(`one ${lineMiB} MiB line: ${c.rssMiB.toFixed(0)} MiB in ${(c.ms / 1000).toFixed(1)} s (${rules.join(', ')}); a plain chunked read ${ref.rssMiB.toFixed(0)} MiB in ${(ref.ms / 1000).toFixed(1)} s`);
  console.log(`  peak memory ratio ${(c.rssMiB / ref.rssMiB).toFixed(2)}, time ratio ${(c.ms / ref.ms).toFixed(1)} against the plain read`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
