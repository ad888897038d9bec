// Benchmark of the JSONL line index: prints throughput and ratios against references measured in
// the same run (raw read + newline count; read + decode + JSON.parse per line). No pass/fail.
// Run: npx vite-node test/unit/engine/sources/jsonl-index.bench.ts [sizeMB]

import { closeSync, mkdtempSync, openSync, rmSync, writeSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';

const MiB = 1024 * 1024;
const sizeMB = Number(process.argv[2] ?? 200);

function generate(path: string): number {
  const fd = openSync(path, 'w');
  let written = 0;
  let i = 0;
  const target = sizeMB * MiB;
  while (written < target) {
    const lines: string[] = [];
    for (let k = 0; k < 1000; k++, i++) {
      lines.push(
        JSON.stringify({
          id: `chat-${i}`,
          messages: [
            { role: 'system', content: 'You are the repair desk of a bicycle co-op.' },
            { role: 'user', content: `My rear derailleur skips on cog ${i % 11}. ${'Cable tension? '.repeat(i % 20)}` },
            { role: 'assistant', content: `Turn the barrel adjuster a quarter turn. ${'Check the hanger alignment. '.repeat(i % 15)}` },
          ],
        }),
      );
    }
    const buf = Buffer.from(lines.join('\n') + '\n');
    writeSync(fd, buf);
    written += buf.length;
  }
  closeSync(fd);
  return written;
}

async function time<T>(fn: () => Promise<T>): Promise<[number, T]> {
  const t = performance.now();
  const r = await fn();
  return [(performance.now() - t) / 1000, r];
}

async function rawNewlines(path: string): Promise<number> {
  const fh = await open(path, 'r');
  const buf = new Uint8Array(4 * MiB);
  let pos = 0;
  let lines = 0;
  for (;;) {
    const { bytesRead } = await fh.read(buf, 0, buf.length, pos);
    if (!bytesRead) break;
    const view = buf.subarray(0, bytesRead);
    for (let i = view.indexOf(10); i >= 0; i = view.indexOf(10, i + 1)) lines++;
    pos += bytesRead;
  }
  await fh.close();
  return lines;
}

async function naiveParse(path: string): Promise<number> {
  const fh = await open(path, 'r');
  const dec = new TextDecoder();
  const buf = new Uint8Array(4 * MiB);
  let pos = 0;
  let records = 0;
  let carry = '';
  for (;;) {
    const { bytesRead } = await fh.read(buf, 0, buf.length, pos);
    if (!bytesRead) break;
    const text = carry + dec.decode(buf.subarray(0, bytesRead), { stream: true });
    const parts = text.split('\n');
    carry = parts.pop()!;
    for (const p of parts) {
      try {
        JSON.parse(p);
        records++;
      } catch {
        /* not a record */
      }
    }
    pos += bytesRead;
  }
  await fh.close();
  return records;
}

async function main(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'shardwise-bench-'));
  try {
    const path = join(dir, 'bench.jsonl');
    const bytes = generate(path);
    const mb = bytes / MiB;
    const [tRaw, lines] = await time(() => rawNewlines(path));
    const [tNaive] = await time(() => naiveParse(path));
    const [tIndex, info] = await time(async () => {
      const src = new JsonlSource(path);
      const i = await src.index();
      await src.close();
      return i;
    });
    const [tScan] = await time(async () => {
      const src = new JsonlSource(path);
      let n = 0;
      for await (const _ of src.scan()) n++;
      await src.close();
      return n;
    });
    if (info.entries !== lines) throw new Error(`index found ${info.entries} lines, newline count ${lines}`);
    const rate = (t: number) => `${(mb / t).toFixed(0)} MB/s`;
    console.log(`shard: ${mb.toFixed(0)} MiB, ${lines} lines`);
    console.log(`reference raw read + newline count: ${rate(tRaw)}`);
    console.log(`reference read + decode + JSON.parse: ${rate(tNaive)}`);
    console.log(`index(): ${rate(tIndex)}  (${(tRaw / tIndex).toFixed(2)}× raw, ${(tNaive / tIndex).toFixed(2)}× naive parse)`);
    console.log(`scan() with findings: ${rate(tScan)}  (${(tNaive / tScan).toFixed(2)}× naive parse)`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

void main();
