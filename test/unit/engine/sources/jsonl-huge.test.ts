import { closeSync, openSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import type { Entry } from '../../../../src/engine/sources/source.js';
import { gzip, tempDir, writeShard } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

const MiB = 1024 * 1024;

/** Peak rss growth while indexing, reading and scanning the three-line huge shard. */
async function measure(p: string, maxLineBytes: number | undefined): Promise<number> {
  global.gc?.();
  const before = process.memoryUsage().rss;
  let peak = before;
  const sample = () => (peak = Math.max(peak, process.memoryUsage().rss));
  const src = new JsonlSource(p, maxLineBytes === undefined ? {} : { maxLineBytes });
  try {
    const info = await src.index({ onProgress: sample });
    expect(info.entries).toBe(3);
    const entries = await src.read(0, 3);
    sample();
    expect(entries.map((e) => e.findings.map((f) => f.rule))).toEqual([[], ['line-too-long'], []]);
    expect(entries[1].findings[0]).toMatchObject({ severity: 'error', line: 2, entry: 1, record: null });
    expect(entries[1].findings[0].message).toMatch(/200\.0 MiB/);
    expect(entries.map((e) => e.record)).toEqual([0, null, 1]);
    expect(entries[2].value).toEqual({ after: 2 });
    const scanned: Entry[] = [];
    for await (const e of src.scan({ onProgress: sample })) scanned.push(e);
    expect(scanned).toEqual(entries);
  } finally {
    await src.close();
  }
  return peak - before;
}

describe('a 200 MB line', () => {
  it('gives line-too-long in bounded memory, and the lines around it stay readable', async () => {
    const p = join(tmp.dir, 'huge.jsonl');
    const fd = openSync(p, 'w');
    writeSync(fd, '{"before":1}\n{"t":"');
    const block = Buffer.alloc(8 * MiB, 'a');
    for (let i = 0; i < 25; i++) writeSync(fd, block);
    writeSync(fd, '"}\n{"after":2}\n');
    closeSync(fd);
    const lineBytes = 25 * 8 * MiB + 8;

    // A line is buffered until it passes the limit, so memory is bounded by the limit plus a few
    // read chunks, whatever the line's size. Checked with a small limit, then with the default.
    const small = await measure(p, 4 * MiB);
    const full = await measure(p, undefined);
    console.log(`200 MB line: rss grew by ${(small / MiB).toFixed(1)} MiB with a 4 MiB limit, ${(full / MiB).toFixed(1)} MiB with the default 64 MiB limit (line is ${(lineBytes / MiB).toFixed(0)} MiB)`);
    // Not timing checks: growth stays far below the line's size.
    expect(small).toBeLessThan(48 * MiB);
    expect(full).toBeLessThan(64 * MiB + 48 * MiB);
  });

  it('a long line inside a gzip stream is skipped across decompressed chunks', async () => {
    const data = Buffer.concat([Buffer.from('{"a":1}\n{"t":"'), Buffer.alloc(3 * MiB, 'b'), Buffer.from('"}\n{"a":2}')]);
    const p = writeShard(tmp.dir, 'long.jsonl.gz', gzip(data));
    const src = new JsonlSource(p, { maxLineBytes: MiB });
    try {
      const info = await src.index();
      const entries = await src.read(0, info.entries);
      expect(entries.map((e) => e.findings.map((f) => f.rule))).toEqual([[], ['line-too-long'], []]);
      expect(entries[2].value).toEqual({ a: 2 });
    } finally {
      await src.close();
    }
  });
});
