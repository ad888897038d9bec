import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import type { Entry } from '../../../../src/engine/sources/source.js';
import { gzip, mulberry32, tempDir, writeShard, zstdCommand, zstdRawFrame } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

interface Expected {
  byteOffset: number;
  text: string;
  record: number | null;
  value: unknown;
}

/** Random lines: records, blanks, broken JSON, CRLF endings, non-ASCII, a few invalid UTF-8 bytes. */
function generate(lines: number, seed: number): Buffer {
  const rnd = mulberry32(seed);
  const parts: Buffer[] = [];
  for (let i = 0; i < lines; i++) {
    const r = rnd();
    let line: Buffer;
    if (r < 0.05) line = Buffer.from(rnd() < 0.5 ? '' : '  \t');
    else if (r < 0.1) line = Buffer.from(`{"id":${i},"text":"unclosed`);
    else if (r < 0.12) line = Buffer.concat([Buffer.from(`{"id":${i},"t":"`), Buffer.from([0xc3, 0x28]), Buffer.from('"}')]);
    else if (r < 0.14) line = Buffer.from(`[${i}, "chain lube"]`);
    else line = Buffer.from(JSON.stringify({ id: i, text: `wheel truing ${'ö'.repeat(Math.floor(rnd() * 20))} 🚲`, n: Math.floor(rnd() * 1e6) }));
    parts.push(line, Buffer.from(rnd() < 0.1 ? '\r\n' : '\n'));
  }
  if (rnd() < 2) parts.push(Buffer.from('{"last":"no newline"}'));
  return Buffer.concat(parts);
}

/** The naive reference: split the whole buffer on 0x0A and parse each piece with JSON.parse. */
function naive(data: Buffer): Expected[] {
  const dec = new TextDecoder('utf-8', { ignoreBOM: true });
  const out: Expected[] = [];
  let start = 0;
  let records = 0;
  while (start < data.length) {
    let end = data.indexOf(0x0a, start);
    const next = end < 0 ? data.length : end + 1;
    if (end < 0) end = data.length;
    let text = dec.decode(data.subarray(start, end));
    if (text.endsWith('\r')) text = text.slice(0, -1);
    let value: unknown;
    let ok = text.trim() !== '';
    try {
      if (ok) value = JSON.parse(text);
    } catch {
      ok = false;
    }
    out.push({ byteOffset: start, text, record: ok ? records++ : null, value });
    start = next;
  }
  return out;
}

function same(entries: Entry[], expected: Expected[], from: number): void {
  expect(entries.length).toBe(expected.length);
  entries.forEach((e, k) => {
    const x = expected[k];
    expect(e.entry).toBe(from + k);
    expect(e.line).toBe(from + k + 1);
    expect(e.byteOffset).toBe(x.byteOffset);
    expect(e.text).toBe(x.text);
    expect(e.record).toBe(x.record);
    expect(e.value).toEqual(x.value);
  });
}

const LINES = 50_000;
let data: Buffer;
let expected: Expected[];
const variants: Array<[string, () => Uint8Array]> = [
  ['plain', () => data],
  ['gzip', () => gzip(data)],
  ['zstd raw-block frame (RFC 8878)', () => zstdRawFrame(data)],
  ['zstd command', () => zstdCommand(data)],
];

beforeAll(() => {
  data = generate(LINES, 3);
  expected = naive(data);
});

describe('line index on a generated 50k-line shard (compared with a naive split + JSON.parse)', () => {
  for (const [name, make] of variants) {
    it(`${name}: random pages and scans equal the naive split`, async () => {
      const bytes = make();
      const ending = name === 'plain' ? '.jsonl' : name === 'gzip' ? '.jsonl.gz' : '.jsonl.zst';
      const p = writeShard(tmp.dir, `index-${name.split(' ')[0]}${ending}`, bytes);
      const src = new JsonlSource(p);
      try {
        await src.open();
        let early: Promise<Entry[]> | null = null;
        let earlyEnd = 0;
        const info = await src.index({
          onProgress: (pr) => {
            // Lines already indexed can be read while indexing goes on.
            if (!early && pr.entries > 0 && !src.info().complete) {
              earlyEnd = Math.min(pr.entries, 500);
              early = src.read(0, earlyEnd);
            }
          },
        });
        expect(info.entries).toBe(expected.length);
        expect(info.complete).toBe(true);
        expect(info.findings).toEqual([]);
        expect(early).not.toBeNull();
        same(await early!, expected.slice(0, earlyEnd), 0);
        const rnd = mulberry32(9);
        for (let k = 0; k < 40; k++) {
          const start = Math.floor(rnd() * expected.length);
          const end = Math.min(expected.length, start + 1 + Math.floor(rnd() * 300));
          same(await src.read(start, end), expected.slice(start, end), start);
        }
        same(await src.read(expected.length - 3, expected.length), expected.slice(-3), expected.length - 3);
        // scan({from, to}) with the index present seeks to `from`.
        const got: Entry[] = [];
        for await (const e of src.scan({ from: 20_000, to: 20_250 })) got.push(e);
        same(got, expected.slice(20_000, 20_250), 20_000);
      } finally {
        await src.close();
      }
      // scan without an index gives the same entries, and counts records for skipped lines too.
      const fresh = new JsonlSource(p);
      try {
        const got: Entry[] = [];
        for await (const e of fresh.scan({ from: 30_000, to: 30_100 })) got.push(e);
        same(got, expected.slice(30_000, 30_100), 30_000);
        let n = 0;
        let records = 0;
        for await (const e of fresh.scan()) {
          n++;
          if (e.record !== null) records++;
        }
        expect(n).toBe(expected.length);
        expect(records).toBe(expected.filter((x) => x.record !== null).length);
      } finally {
        await fresh.close();
      }
    });
  }
});

describe('cancelling', () => {
  it('index honours an AbortSignal and can run again afterwards', async () => {
    const big = Buffer.concat(Array.from({ length: 6 }, () => data)); // several 4 MiB chunks
    const p = writeShard(tmp.dir, 'abort.jsonl', big);
    const src = new JsonlSource(p);
    try {
      const pre = new AbortController();
      pre.abort();
      await expect(src.index({ signal: pre.signal })).rejects.toMatchObject({ name: 'AbortError' });
      const ac = new AbortController();
      let calls = 0;
      const run = src.index({
        signal: ac.signal,
        onProgress: () => {
          calls++;
          ac.abort();
        },
      });
      await expect(run).rejects.toMatchObject({ name: 'AbortError' });
      expect(calls).toBe(1);
      expect(src.info().complete).toBe(false);
      expect(src.info().entries).toBeGreaterThan(0);
      expect(src.info().entries).toBeLessThan(expected.length * 6);
      const done = await src.index();
      expect(done.entries).toBe(expected.length * 6 - 5); // five joins: each copy's unterminated last line runs into the next copy's first
    } finally {
      await src.close();
    }
  });

  it('scan honours an AbortSignal', async () => {
    const p = writeShard(tmp.dir, 'abort-scan.jsonl.gz', gzip(data));
    const src = new JsonlSource(p);
    const ac = new AbortController();
    let seen = 0;
    const run = async () => {
      for await (const _ of src.scan({ signal: ac.signal })) {
        if (++seen === 10) ac.abort();
      }
    };
    await expect(run()).rejects.toMatchObject({ name: 'AbortError' });
    expect(seen).toBeLessThan(expected.length);
    await src.close();
  });
});
