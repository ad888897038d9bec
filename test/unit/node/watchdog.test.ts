// The watchdog over reading workers: a worker that reports nothing (no record, no byte) for the set
// time is ended with a read-stalled finding; one that is slow but keeps moving goes on. The stuck
// and slow workers here are small worker scripts that behave so; the real worker is used for the
// normal path.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../../src/engine/findings';
import { withDefaults } from '../../../src/engine/config';
import { analyzeFile } from '../../../src/node/pool';
import { SourceSession } from '../../../src/node/session';
import { buildBundles } from '../helpers/build';

let dir = '';
let shard = '';
let worker = '';
beforeAll(() => {
  worker = join(buildBundles(), 'worker.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-watchdog-'));
  shard = join(dir, 'small.jsonl');
  writeFileSync(shard, '{"text": "true the wheel"}\n'.repeat(100));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function script(name: string, body: string): string {
  const p = join(dir, name);
  writeFileSync(p, `const { parentPort } = require('node:worker_threads');\n${body}\n`);
  return p;
}

describe('the analysis pool', () => {
  it('a worker stuck in a loop is ended after the stall time: read-stalled, an error, and the run completes', async () => {
    const stuck = script('stuck.js', "parentPort.on('message', () => { for (;;) {} });");
    const found: Finding[] = [];
    const t = Date.now();
    await analyzeFile(shard, {
      config: withDefaults(),
      workers: 2,
      workerScript: stuck,
      open: { stallSeconds: 1 },
      onFileFindings: (fs) => found.push(...fs),
      onOutcomes: () => undefined,
    });
    expect(Date.now() - t).toBeLessThan(10_000);
    expect(found.map((f) => [f.rule, f.severity])).toEqual([['read-stalled', 'error']]);
    expect(found[0].message).toMatch(/^stopped: no progress for 1 s/);
  });
  it('a slow worker that keeps reporting new bytes goes on past the stall time', async () => {
    const slow = script(
      'slow.js',
      `parentPort.on('message', (req) => {
        let done = 0;
        const t = setInterval(() => {
          done += 1;
          parentPort.postMessage({ id: req.id, kind: 'progress', progress: { done, total: 12, entries: done } });
          if (done === 12) { clearInterval(t); parentPort.postMessage({ id: req.id, kind: 'done' }); }
        }, 250);
      });`,
    );
    const found: Finding[] = [];
    const t = Date.now();
    await analyzeFile(shard, { config: withDefaults(), workers: 1, workerScript: slow, open: { stallSeconds: 1 }, onFileFindings: (fs) => found.push(...fs), onOutcomes: () => undefined });
    expect(Date.now() - t).toBeGreaterThan(2500);
    expect(found).toEqual([]);
  });
  it('a worker that repeats the same progress without moving is stalled all the same', async () => {
    const spin = script(
      'spin.js',
      `parentPort.on('message', (req) => {
        setInterval(() => parentPort.postMessage({ id: req.id, kind: 'progress', progress: { done: 5, total: 10, entries: 5 } }), 100);
      });`,
    );
    const found: Finding[] = [];
    await analyzeFile(shard, { config: withDefaults(), workers: 1, workerScript: spin, open: { stallSeconds: 1 }, onFileFindings: (fs) => found.push(...fs), onOutcomes: () => undefined });
    expect(found.map((f) => f.rule)).toEqual(['read-stalled']);
  });
  it('the real worker on a sound shard never trips it', async () => {
    const found: Finding[] = [];
    let outcomes = 0;
    // A few seconds: a loaded machine may take more than one to start a worker and load the bundle.
    await analyzeFile(shard, { config: withDefaults(), workers: 2, workerScript: worker, open: { stallSeconds: 5 }, onFileFindings: (fs) => found.push(...fs), onOutcomes: (os) => (outcomes += os.length) });
    expect(outcomes).toBe(100);
    expect(found.filter((f) => f.rule === 'read-stalled')).toEqual([]);
  });
});

describe("a record view's reading worker", () => {
  it('indexing that goes silent: the worker is ended, the view told, pending reads fail with the same sentence', async () => {
    const silent = script(
      'silent.js',
      `parentPort.on('message', (req) => {
        if (req.op === 'open') parentPort.postMessage({ id: req.id, kind: 'info', info: { format: 'jsonl', path: req.path, sizeBytes: 1, entries: 0, complete: false, findings: [] } });
      });`,
    );
    const errors: string[] = [];
    const session = new SourceSession(shard, { stallSeconds: 1 }, { onInfo: () => undefined, onProgress: () => undefined, onIndexed: () => undefined, onError: (m) => errors.push(m) }, undefined, silent);
    await session.start();
    const page = session.read(0, 10);
    await expect(page).rejects.toThrow(/^stopped: no progress for 1 s/);
    expect(errors).toEqual([expect.stringMatching(/^stopped: no progress for 1 s while reading/)]);
    await expect(session.read(0, 1)).rejects.toThrow(/stopped: no progress/);
    session.dispose();
  });
});
