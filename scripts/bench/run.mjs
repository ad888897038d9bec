// Running measurements: child processes (with /usr/bin/time -v for peak RSS where present),
// paired alternating runs, medians.
import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
export const CHILD = join(here, 'child.mjs');
export const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;

/** Children still running, so Ctrl+C can end them. */
export const running = new Set();

/** Ends a child started here and everything in its process group. */
export function stop(child) {
  try {
    process.kill(-child.pid, 'SIGKILL');
  } catch {
    child.kill('SIGKILL');
  }
}

export const median = (xs) => {
  const s = xs.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  if (!s.length) return NaN;
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

/**
 * Runs a command; resolves with its wall time (ms, from spawn to exit), exit code, standard output,
 * standard error and peak RSS in MB (from /usr/bin/time -v, else null).
 */
export function runCommand(cmd, args, { env, stdout = 'pipe', okCodes = [0], timeoutMs = 0 } = {}) {
  return new Promise((resolve, reject) => {
    const argv = TIME ? ['-v', cmd, ...args] : args;
    const t0 = process.hrtime.bigint();
    // Its own process group, so stopping the benchmark ends /usr/bin/time and the command under it.
    const child = spawn(TIME ?? cmd, argv, { env: { ...process.env, ...env }, stdio: ['ignore', stdout, 'pipe'], detached: true });
    running.add(child);
    let out = '';
    let err = '';
    child.stdout?.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (err += d));
    const timer = timeoutMs ? setTimeout(() => stop(child), timeoutMs) : null;
    child.on('error', (e) => {
      running.delete(child);
      reject(e);
    });
    child.on('close', (code, signal) => {
      running.delete(child);
      if (timer) clearTimeout(timer);
      const wallMs = Number(process.hrtime.bigint() - t0) / 1e6;
      const rss = /Maximum resident set size \(kbytes\): (\d+)/.exec(err);
      const stderr = err.replace(/\n?\tCommand being timed:[\s\S]*$/, '');
      if (!okCodes.includes(code)) {
        return reject(new Error(`${cmd} ${args.join(' ')} exited with ${code ?? signal}:\n${stderr.slice(-2000)}`));
      }
      resolve({ wallMs, code, stdout: out, stderr, rssMB: rss ? Number(rss[1]) / 1024 : null });
    });
  });
}

/** Runs one mode of child.mjs in a fresh node process; resolves with its result plus wallMs and rssMB. */
export async function runChild(mode, args, ctx, { env } = {}) {
  const r = await runCommand(process.execPath, [CHILD, mode, JSON.stringify(args)], {
    env: { SW_BENCH_API: ctx.api, SW_BENCH_WORKER: ctx.worker, ...env },
  });
  const line = r.stdout.split('\n').find((l) => l.startsWith('@@result '));
  if (!line) throw new Error(`child ${mode} gave no result:\n${r.stderr.slice(-2000)}`);
  const result = JSON.parse(line.slice('@@result '.length));
  const rssMB = r.rssMB ?? (result.maxRSSKiB ? result.maxRSSKiB / 1024 : null);
  return { ...result, wallMs: r.wallMs, rssMB };
}

/** `runs` paired measurements of a and b, alternating which goes first; resolves with both lists. */
export async function paired(runs, a, b) {
  const as = [];
  const bs = [];
  for (let i = 0; i < runs; i++) {
    if (i % 2 === 0) {
      as.push(await a(i));
      bs.push(await b(i));
    } else {
      bs.push(await b(i));
      as.push(await a(i));
    }
  }
  return [as, bs];
}

export async function repeat(runs, f) {
  const xs = [];
  for (let i = 0; i < runs; i++) xs.push(await f(i));
  return xs;
}
