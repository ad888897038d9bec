// Temporary decompressed copies are removed when the process ends: on Ctrl+C (SIGINT), on SIGTERM,
// and, for a process killed outright (SIGKILL), by the next Shardwise process. The signal keeps
// its usual effect (the process still ends by it).
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { build } from 'esbuild';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';

let dir = '';
let child = '';
let shard = '';
beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-tempfiles-'));
  child = join(dir, 'child.cjs');
  await build({ entryPoints: [join(__dirname, 'tempfiles-child.ts')], outfile: child, bundle: true, platform: 'node', format: 'cjs', logLevel: 'error' });
  shard = join(dir, 'chats.jsonl.gz');
  writeFileSync(shard, gzipSync('{"text": "patch the tube"}\n'.repeat(10_000)));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// What a test started, ended and removed after it, passed or failed: a holding child left running
// (it waits for good) and the copies it made.
const children: ReturnType<typeof spawn>[] = [];
const copies: string[] = [];
afterEach(() => {
  for (const proc of children.splice(0)) if (proc.exitCode === null && proc.signalCode === null) proc.kill('SIGKILL');
  for (const copy of copies.splice(0)) rmSync(copy, { recursive: true, force: true });
});

function start(...args: string[]): Promise<{ proc: ReturnType<typeof spawn>; line: string }> {
  const proc = spawn(process.execPath, [child, ...args], { stdio: ['ignore', 'pipe', 'inherit'] });
  children.push(proc);
  return new Promise((resolve, reject) => {
    let out = '';
    proc.stdout!.on('data', (c) => {
      out += c;
      if (out.includes('\n')) {
        const line = out.trim();
        for (const name of line.replace(/^READY /, '').split(',').filter(Boolean)) copies.push(join(tmpdir(), name));
        resolve({ proc, line });
      }
    });
    proc.on('exit', (code) => reject(new Error(`child ended early (${code}): ${out}`)));
  });
}

const ended = (proc: ReturnType<typeof spawn>) => new Promise<{ code: number | null; signal: string | null }>((r) => proc.on('exit', (code, signal) => r({ code, signal })));

describe('temporary copies outlive no process', () => {
  for (const sig of ['SIGINT', 'SIGTERM'] as const) {
    it(`${sig}: the copy is removed and the process still ends by the signal`, async () => {
      const { proc, line } = await start('hold', shard);
      const folders = line.replace(/^READY /, '').split(',').filter(Boolean);
      expect(folders).toHaveLength(1);
      const copy = join(tmpdir(), folders[0]);
      expect(existsSync(copy)).toBe(true);
      const done = ended(proc);
      proc.kill(sig);
      const how = await done;
      expect(how.signal).toBe(sig);
      expect(existsSync(copy)).toBe(false);
    });
  }
  it('SIGKILL leaves the copy; the next Shardwise process removes it', async () => {
    const { proc, line } = await start('hold', shard);
    const copy = join(tmpdir(), line.replace(/^READY /, ''));
    const done = ended(proc);
    proc.kill('SIGKILL');
    await done;
    expect(existsSync(copy)).toBe(true);
    const next = spawnSync(process.execPath, [child, 'sweep'], { encoding: 'utf8' });
    expect(next.stdout.trim()).toBe('SWEPT');
    expect(existsSync(copy)).toBe(false);
  });
});
