// Shared by the CLI gate tests: the built bin run as users run it (a child process, never blocking
// the test runner), a temporary folder per test file, generated shards with known contents.
import { spawn } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll } from 'vitest';
import { buildBundles } from '../helpers/build';
import { mulberry32 } from '../helpers/random';

export const ctx = { cli: '', dir: '' };

/** Call at the top of a test file: builds the bundles and makes (and later removes) its folder. */
export function useGate(): void {
  beforeAll(() => {
    ctx.cli = join(buildBundles(), 'cli.js');
    ctx.dir = mkdtempSync(join(tmpdir(), 'shardwise-gate-'));
  });
  afterAll(() => rmSync(ctx.dir, { recursive: true, force: true }));
}

/** Runs a command without blocking the test runner's thread (a long synchronous child stalls its heartbeat). */
export function runAsync(cmd: string, args: string[], opts: { cwd?: string } = {}): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: opts.cwd ?? ctx.dir });
    let out = '';
    let err = '';
    child.stdout.setEncoding('utf8').on('data', (d) => (out += d));
    child.stderr.setEncoding('utf8').on('data', (d) => (err += d));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, out, err }));
  });
}

export function shardwise(args: string[], opts: { cwd?: string } = {}) {
  return runAsync(process.execPath, [ctx.cli, ...args], opts);
}

export function put(rel: string, content: string | Buffer): string {
  const p = join(ctx.dir, rel);
  mkdirSync(join(p, '..'), { recursive: true });
  writeFileSync(p, content);
  return p;
}

export const chat = (u: string, a: string, extra: Record<string, unknown> = {}) =>
  JSON.stringify({ ...extra, messages: [{ role: 'user', content: u }, { role: 'assistant', content: a }] });

/** Shards with known contents: `n` chats each, every 7th record with a repeated user turn. */
export function shards(folder: string, count: number, seed: number): { paths: string[]; texts: string[][]; ids: string[][] } {
  const rand = mulberry32(seed);
  const words = ['spoke', 'derailleur', 'chain', 'tubeless', '🚲', '自転車', 'brake\u00a0pad', '{"psi": 60}', 'cassette', 'headset'];
  const paths: string[] = [];
  const texts: string[][] = [];
  const ids: string[][] = [];
  for (let s = 0; s < count; s++) {
    const lines: string[] = [];
    const t: string[] = [];
    const id: string[] = [];
    const n = 5 + Math.floor(rand() * 40);
    for (let i = 0; i < n; i++) {
      const u = Array.from({ length: 1 + Math.floor(rand() * 30) }, () => words[Math.floor(rand() * words.length)]).join(' ');
      const a = Array.from({ length: 1 + Math.floor(rand() * 60) }, () => words[Math.floor(rand() * words.length)]).join(' ');
      const rid = `s${s}-r${i}`;
      if (i % 7 === 3) {
        lines.push(JSON.stringify({ id: rid, messages: [{ role: 'user', content: u }, { role: 'user', content: a }, { role: 'assistant', content: a }] }));
        t.push(u, a, a);
      } else {
        lines.push(chat(u, a, { id: rid }));
        t.push(u, a);
      }
      id.push(rid);
    }
    paths.push(put(join(folder, `part-${String(s).padStart(5, '0')}.jsonl`), lines.join('\n') + '\n'));
    texts.push(t);
    ids.push(id);
  }
  return { paths, texts, ids };
}

