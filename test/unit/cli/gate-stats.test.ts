// The CLI gate: stats and merge (mergeable sketches, the fan-out recipe), sample, head and slice.
import { spawn } from 'node:child_process';
import { chmodSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { gzipSync } from 'node:zlib';
import Ajv04 from 'ajv-draft-04';
import { tableFromArrays, tableToIPC } from 'apache-arrow';
import { get_encoding } from 'tiktoken';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildBundles, projectRoot } from '../helpers/build';
import { mulberry32 } from '../helpers/random';
import { chat, ctx, put, runAsync, shards, shardwise, useGate } from './gateHelpers';

useGate();

describe('stats, merge and the fan-out recipe', () => {
  it('stats counts what the generator wrote: records, tokens (tiktoken as oracle), field types', async () => {
    const { paths, texts } = shards('stats1', 1, 21);
    put('stats1/part-00000.jsonl', readFileSync(paths[0], 'utf8') + JSON.stringify({ id: null, text: 'plain' }) + '\n');
    const doc = JSON.parse((await shardwise(['stats', paths[0], '--format', 'json', '--in-thread'])).out);
    const lines = readFileSync(paths[0], 'utf8').trim().split('\n');
    const s = doc.files[0].summary;
    expect(s.records).toBe(lines.length);
    const enc = get_encoding('cl100k_base');
    const expected = [...texts[0], 'plain'].reduce((a, t) => a + enc.encode_ordinary(t).length, 0);
    enc.free();
    expect(s.tokens.total).toBe(expected);
    const id = s.fields.find((f: { name: string }) => f.name === 'id');
    expect(id.types).toEqual({ null: 1, string: lines.length - 1 });
    expect(id.nulls).toBe(1);
    const messages = s.fields.find((f: { name: string }) => f.name === 'messages');
    expect(messages.missing).toBe(1);
    expect(s.distinctRecords).toBe(lines.length);
  });

  it('the README recipe: a job array simulated with xargs -P 2, then merge', async () => {
    shards('recipe', 20, 41);
    const single = JSON.parse((await shardwise(['stats', 'recipe', '--format', 'json', '--workers', '2'])).out);
    mkdirSync(join(ctx.dir, 'recipe-out'), { recursive: true });
    // The shell form of the README's recipe, word for word apart from the bin path.
    const sh = await runAsync('sh', ['-c', `ls recipe/*.jsonl | xargs -P 2 -I{} sh -c 'node "${ctx.cli}" stats "{}" --format json --in-thread --output "recipe-out/$(basename "{}").json"' && node "${ctx.cli}" merge recipe-out/*.json > merged.json`]);
    expect(sh.code, sh.err).toBe(0);
    const merged = JSON.parse(readFileSync(join(ctx.dir, 'merged.json'), 'utf8'));
    // merge(per-shard) equals the single run: totals, percentiles (the same sketch) and the state.
    expect(merged.total).toEqual(single.total);
    expect(merged.state).toEqual(single.state);
    expect(merged.files.map((f: { path: string }) => f.path)).toEqual(single.files.map((f: { path: string }) => f.path));
    expect(single.total.records).toBeGreaterThan(200);
    // Merging merged reports again changes nothing (associative).
    const parts = readdirSync(join(ctx.dir, 'recipe-out')).sort().map((f) => join(ctx.dir, 'recipe-out', f));
    expect(parts).toHaveLength(20);
    writeFileSync(join(ctx.dir, 'half1.json'), (await shardwise(['merge', ...parts.slice(0, 7)])).out);
    writeFileSync(join(ctx.dir, 'half2.json'), (await shardwise(['merge', ...parts.slice(7)])).out);
    expect(JSON.parse((await shardwise(['merge', 'half1.json', 'half2.json'])).out).total).toEqual(single.total);
  });

  it('merge refuses what is not a stats report', async () => {
    const p = put('not-a-report.json', JSON.stringify({ files: [{ path: 'x' }] }));
    const r = (await shardwise(['merge', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain('not a report of `shardwise stats --format json`');
  });
});

describe('sample, head and slice', () => {
  it('the same seed gives the same sample; its records are exactly records of the file', async () => {
    const lines = Array.from({ length: 500 }, (_, i) => chat(`question ${i}`, `answer ${i}`, { id: i }));
    const p = put('sample.jsonl', [lines.slice(0, 100).join('\n'), '', '{"broken": ', lines.slice(100).join('\n')].join('\n') + '\n');
    const a = (await shardwise(['sample', p, '-n', '25', '--seed', '7']));
    const b = (await shardwise(['sample', p, '-n', '25', '--seed', '7']));
    const c = (await shardwise(['sample', p, '-n', '25', '--seed', '8']));
    expect(a.code).toBe(0);
    expect(a.out).toBe(b.out);
    expect(c.out).not.toBe(a.out);
    const got = a.out.trim().split('\n');
    expect(got).toHaveLength(25);
    expect(new Set(got).size).toBe(25);
    for (const l of got) expect(lines).toContain(l);
    // In file order.
    const order = got.map((l) => lines.indexOf(l));
    expect([...order].sort((x, y) => x - y)).toEqual(order);
    // Uniform enough: over many seeds every quarter of the file is drawn (a loose, seeded check).
    const quarters = [0, 0, 0, 0];
    const runs = await Promise.all(Array.from({ length: 12 }, (_, seed) => shardwise(['sample', p, '-n', '10', '--seed', String(seed)])));
    for (const r of runs) for (const l of r.out.trim().split('\n')) quarters[Math.floor(lines.indexOf(l) / 125)]++;
    // 120 draws over four quarters (30 expected in each): a quarter with fewer than 12 would be a skew.
    for (const q of quarters) expect(q).toBeGreaterThan(11);
  });

  it('head and slice print records by their 1-based numbers, skipping lines that hold none', async () => {
    const lines = Array.from({ length: 30 }, (_, i) => JSON.stringify({ id: i + 1, text: `record ${i + 1}` }));
    const p = put('slice.jsonl', [lines[0], '', lines.slice(1).join('\n')].join('\n') + '\n');
    expect((await shardwise(['head', p, '-n', '3'])).out).toBe(lines.slice(0, 3).join('\n') + '\n');
    expect((await shardwise(['slice', p, '--from', '10', '--to', '12'])).out).toBe(lines.slice(9, 12).join('\n') + '\n');
    const parquet = (await shardwise(['head', join(projectRoot, 'demo-data', 'chat-sft.parquet'), '-n', '2'])).out.trim().split('\n');
    expect(parquet).toHaveLength(2);
    expect(JSON.parse(parquet[0]).messages.length).toBeGreaterThan(0);
    expect((await shardwise(['slice', p, '--from', '5', '--to', '2'])).code).toBe(2);
  });
});

