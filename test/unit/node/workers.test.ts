// The worker threads behind the editor: whole-shard analysis split across workers (cancellable),
// and a record view's reading worker that serves pages while it is still indexing.
import { appendFileSync, copyFileSync, mkdtempSync, rmSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { EntryOutcome } from '../../../src/engine/analyze';
import { withDefaults } from '../../../src/engine/config';
import type { Progress } from '../../../src/engine/sources/source';
import { analyzeFile } from '../../../src/node/pool';
import { SourceSession } from '../../../src/node/session';
import { buildBundles } from '../helpers/build';

let worker = '';
let dir = '';
let shard = '';
const LINES = 60_000;

beforeAll(() => {
  worker = join(buildBundles(), 'worker.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-workers-'));
  const rows: string[] = [];
  for (let i = 0; i < LINES; i++) {
    if (i % 1000 === 999) rows.push('{"broken": ');
    else rows.push(JSON.stringify({ messages: [{ role: 'user', content: `Question ${i} about brake pads` }, { role: 'assistant', content: `Answer ${i}: check the pad wear line.` }] }));
  }
  shard = join(dir, 'big.jsonl');
  writeFileSync(shard, rows.join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('analysis across worker threads', () => {
  it('every entry is analysed exactly once, whatever the number of workers', async () => {
    for (const workers of [1, 3]) {
      const seen = new Map<number, EntryOutcome>();
      await analyzeFile(shard, {
        config: withDefaults(),
        workers,
        block: 500,
        workerScript: worker,
        onOutcomes: (os) => os.forEach((o) => {
          expect(seen.has(o.entry)).toBe(false);
          seen.set(o.entry, o);
        }),
      });
      expect(seen.size).toBe(LINES);
      const records = [...seen.values()].filter((o) => o.kind === 'record');
      expect(records.length).toBe(LINES - LINES / 1000);
      // Record numbers are global and dense even though each worker saw only its blocks.
      expect(new Set(records.map((o) => o.record)).size).toBe(records.length);
      expect(Math.max(...records.map((o) => o.record!))).toBe(records.length - 1);
      // And each is the number the file gives (one broken line in every thousand is no record).
      for (const o of records) expect(o.record).toBe(o.entry - Math.floor((o.entry + 1) / 1000));
    }
  });

  it('cancelling stops the workers with an AbortError', async () => {
    const ac = new AbortController();
    let outcomes = 0;
    const run = analyzeFile(shard, {
      config: withDefaults(),
      workers: 2,
      workerScript: worker,
      signal: ac.signal,
      onProgress: () => ac.abort(),
      onOutcomes: (os) => (outcomes += os.length),
    });
    await expect(run).rejects.toMatchObject({ name: 'AbortError' });
    expect(outcomes).toBeLessThan(LINES);
  });
});

describe('a record view\'s reading worker', () => {
  it('serves pages with global line and record numbers, and per-turn token counts', async () => {
    const progress: Progress[] = [];
    let indexed = false;
    const session = new SourceSession(shard, {}, {
      onInfo: () => undefined,
      onProgress: (p) => progress.push(p),
      onIndexed: (info) => (indexed = info.complete),
      onError: (m) => {
        throw new Error(m);
      },
    }, undefined, worker);
    try {
      await session.start();
      while (!indexed) await new Promise((r) => setTimeout(r, 20));
      const page = await session.read(1990, 2010);
      expect(page.map((e) => e.line)).toEqual(Array.from({ length: 20 }, (_, i) => 1991 + i));
      // Lines 1000 and 2000 are broken: line 1991 holds record 1989.
      expect(page[0].record).toBe(1989);
      expect(page.find((e) => e.line === 2000)?.record).toBeNull();
      const turns = await session.turnTokens(page[0].value, withDefaults());
      expect(turns.map((t) => t.role)).toEqual(['user', 'assistant']);
      expect(turns.every((t) => t.tokens > 0)).toBe(true);
      // The finished index, kept as JSON, lets the next session start complete, with the same pages.
      const kept = JSON.parse(JSON.stringify(await session.exportIndex()));
      const infos: boolean[] = [];
      const next = new SourceSession(shard, {}, { onInfo: (i) => infos.push(i.complete), onProgress: () => undefined, onIndexed: () => undefined, onError: () => undefined }, undefined, worker);
      try {
        const first = await next.start(kept);
        expect(first.complete).toBe(true);
        expect(first.entries).toBe(LINES);
        expect(await next.read(1990, 2010)).toEqual(page);
      } finally {
        next.dispose();
      }
    } finally {
      session.dispose();
    }
  });

  it('a shard whose format cannot extend is "none" until its file changes, then "replaced" or "shorter"', async () => {
    // The demo's Arrow file (generated by demo-data/generate.mjs), copied: its copy is changed below.
    const arrow = join(dir, 'copy.arrow');
    copyFileSync(join(__dirname, '../../../demo-data/chat-sft.arrow'), arrow);
    const session = new SourceSession(arrow, {}, { onInfo: () => undefined, onProgress: () => undefined, onIndexed: () => undefined, onError: () => undefined }, undefined, worker);
    try {
      await session.start();
      expect((await session.extend(false)).change).toBe('none');
      appendFileSync(arrow, Buffer.from('more bytes'));
      expect((await session.extend(false)).change).toBe('replaced');
      truncateSync(arrow, 100);
      expect((await session.extend(false)).change).toBe('shorter');
    } finally {
      session.dispose();
    }
  });
});
