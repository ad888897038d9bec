// Hand-made hostile and broken shards: each ends in records or a clear finding, in bounded time and
// memory. Outside oracles: `gzip -dc` and `zstd -t` / `zstd -dc` (Debian's gzip and zstd, the
// reference implementations of RFC 1952 and RFC 8878) for what a damaged stream still yields.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { build } from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tableFromArrays, tableToIPC } from 'apache-arrow';
import * as pw from 'parquet-wasm/node';
import { JsonlSource } from '../../../../src/engine/sources/jsonl';
import { JsonArraySource } from '../../../../src/engine/sources/jsonArray';
import { ParquetSource } from '../../../../src/engine/sources/parquet';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream';
import { createSource } from '../../../../src/engine/sources/index';
import type { Entry, RecordSource, SourceInfo } from '../../../../src/engine/sources/source';
import { requireTestdata } from './testdata';
import { withClaimedRows } from './parquetFooter';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-hostile-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function write(name: string, data: string | Uint8Array): string {
  const p = join(dir, name);
  writeFileSync(p, data);
  return p;
}

async function scanAll(s: RecordSource): Promise<{ entries: Entry[]; info: SourceInfo }> {
  await s.open();
  const entries: Entry[] = [];
  for await (const e of s.scan()) entries.push(e);
  const info = s.info();
  await s.close();
  return { entries, info };
}

const lines = (n: number) => Array.from({ length: n }, (_, i) => JSON.stringify({ id: i, text: `chain ${i} skips on the small cog` })).join('\n') + '\n';

describe('gzip read as far as it goes (oracle: gzip -dc)', () => {
  const text = lines(5000);
  it('a bit flipped in the trailer CRC keeps every line, as gzip -dc does, plus read-corrupt', async () => {
    const gz = Buffer.from(gzipSync(text));
    gz[gz.length - 6] ^= 0x10;
    const p = write('crc.jsonl.gz', gz);
    const oracle = spawnSync('gzip', ['-dc', p]);
    expect(oracle.status).not.toBe(0);
    expect(oracle.stdout.toString()).toBe(text);
    const { entries, info } = await scanAll(new JsonlSource(p));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(5000);
    const f = info.findings.filter((x) => x.rule === 'read-corrupt');
    expect(f).toHaveLength(1);
    expect(f[0].severity).toBe('error');
    expect(f[0].message).toMatch(/CRC-32 does not match/);
  });
  it('a flipped length in the trailer: every line kept, read-corrupt naming the length', async () => {
    const gz = Buffer.from(gzipSync(text));
    gz[gz.length - 2] ^= 0x01;
    const p = write('len.jsonl.gz', gz);
    const s = new JsonlSource(p);
    const info = await s.index();
    expect(s.recordCount).toBe(5000);
    expect(info.findings.map((x) => x.rule)).toEqual(['read-corrupt']);
    expect(info.findings[0].message).toMatch(/length in its trailer/);
    await s.close();
  });
  it('a cut-short file keeps the lines that inflated (the same count as gzip -dc gives)', async () => {
    const gz = Buffer.from(gzipSync(lines(50_000)));
    const p = write('cut.jsonl.gz', gz.subarray(0, Math.floor(gz.length / 2)));
    const oracle = spawnSync('gzip', ['-dc', p], { maxBuffer: 1 << 28 });
    const oracleComplete = oracle.stdout.toString().split('\n').slice(0, -1).filter((l) => l.endsWith('}')).length;
    const { entries, info } = await scanAll(new JsonlSource(p));
    const records = entries.filter((e) => e.value !== undefined).length;
    // Ours inflates in 16 KiB input steps: at most one step's output short of the oracle's.
    expect(records).toBeGreaterThan(oracleComplete - 2000);
    expect(records).toBeLessThanOrEqual(oracleComplete);
    expect(info.findings.some((x) => x.rule === 'read-corrupt' && /cut short/.test(x.message))).toBe(true);
  });
  it('several members read as one stream, as gzip -dc reads them', async () => {
    const p = write('multi.jsonl.gz', Buffer.concat([gzipSync(lines(3)), gzipSync(lines(4))]));
    expect(spawnSync('gzip', ['-dc', p]).stdout.toString()).toBe(lines(3) + lines(4));
    const { entries, info } = await scanAll(new JsonlSource(p));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(7);
    expect(info.findings).toEqual([]);
  });
  it('a bomb stops with read-limit once it inflates past the ratio cap; memory stays bounded', async () => {
    const line = JSON.stringify({ text: 'spoke '.repeat(170) }) + '\n';
    const p = write('bomb.jsonl.gz', gzipSync(Buffer.from(line.repeat(Math.ceil((150 << 20) / line.length)))));
    const before = process.memoryUsage().rss;
    const s = new JsonlSource(p);
    const info = await s.index();
    const grown = process.memoryUsage().rss - before;
    await s.close();
    const f = info.findings.find((x) => x.rule === 'read-limit');
    expect(f?.message).toMatch(/more than 200 times its compressed size/);
    expect(Number(info.facts?.decompressedBytes)).toBeLessThan(80 << 20);
    expect(grown).toBeLessThan(400 << 20);
  });
});

describe('zstd content checksums (oracle: zstd -t)', () => {
  const text = lines(3000);
  let good = '';
  beforeAll(() => {
    const plain = write('z.jsonl', text);
    // zstd writes a content checksum by default; --no-compress-literals is not needed: -1 is enough.
    execFileSync('zstd', ['-q', '-f', '-1', plain, '-o', join(dir, 'z.jsonl.zst')]);
    good = join(dir, 'z.jsonl.zst');
  });
  it('a sound file verifies (our XXH64 agrees with zstd on every frame)', async () => {
    const { entries, info } = await scanAll(new JsonlSource(good));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(3000);
    expect(info.findings).toEqual([]);
  });
  it('a flipped checksum byte is read-corrupt, every line kept', async () => {
    const b = readFileSync(good);
    b[b.length - 1] ^= 0x40;
    const p = write('badsum.jsonl.zst', b);
    expect(spawnSync('zstd', ['-t', '-q', p]).status).not.toBe(0);
    const { entries, info } = await scanAll(new JsonlSource(p));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(3000);
    expect(info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
    expect(info.findings[0].message).toMatch(/content checksum does not match/);
  });
  it('a changed byte among the stored literals is caught by the checksum alone', async () => {
    // Literals stored uncompressed (--no-compress-literals): one letter changed still decodes.
    let seed = 7;
    const letter = () => 'abcdefghijklmnopqrstuvwxyz0123456789'[(seed = (seed * 1103515245 + 12345) % 2 ** 31) % 36];
    const keys = Array.from({ length: 400 }, () => Array.from({ length: 30 }, letter).join(''));
    const plain = write('noise.jsonl', keys.map((key, id) => JSON.stringify({ id, key })).join('\n') + '\n');
    const zst = join(dir, 'noise.jsonl.zst');
    execFileSync('zstd', ['-q', '-f', '-1', '--no-compress-literals', plain, '-o', zst]);
    const b = readFileSync(zst);
    const at = b.indexOf(Buffer.from(keys[5]));
    expect(at).toBeGreaterThan(0);
    b[at + 3] = b[at + 3] === 0x61 ? 0x62 : 0x61;
    const p = write('litflip.jsonl.zst', b);
    expect(spawnSync('zstd', ['-t', '-q', p]).status).not.toBe(0);
    const { entries, info } = await scanAll(new JsonlSource(p));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(400);
    expect(info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
    expect(info.findings[0].message).toMatch(/content checksum does not match/);
  });
});

describe('empty files: one verdict for every format (read-empty, an error)', () => {
  const cases: [string, (p: string) => RecordSource][] = [
    ['empty.jsonl', (p) => new JsonlSource(p)],
    ['empty.jsonl.gz', (p) => new JsonlSource(p, { compression: 'gzip' })],
    ['empty.jsonl.zst', (p) => new JsonlSource(p, { compression: 'zstd' })],
    ['empty.json', (p) => new JsonArraySource(p)],
    ['empty.parquet', (p) => new ParquetSource(p)],
    ['empty.arrow', (p) => new ArrowFileSource(p)],
    ['empty.arrows', (p) => new ArrowStreamSource(p)],
  ];
  for (const [name, make] of cases) {
    it(name, async () => {
      const p = write(name, '');
      const { entries, info } = await scanAll(make(p));
      expect(entries).toEqual([]);
      const errors = info.findings.filter((f) => f.severity === 'error');
      expect(errors.map((f) => f.rule)).toEqual(['read-empty']);
      expect(errors[0].message).toBe('the file is empty (0 bytes): it holds no records');
    });
  }
  it('the sniffer opens every empty file by its name, so each reaches its own reader', () => {
    for (const [name] of cases) expect(createSource(join(dir, name)).format).toBeTruthy();
  });
  it('a gzip file of no content decompresses to 0 bytes: read-empty too', async () => {
    const p = write('nothing.jsonl.gz', gzipSync(Buffer.alloc(0)));
    const { info } = await scanAll(new JsonlSource(p));
    expect(info.findings.map((f) => f.rule)).toEqual(['read-empty']);
  });
});

describe('a file truncated while it is read', () => {
  it('JSON Lines: a read-corrupt error, never a silently short pass', async () => {
    const p = write('shrinks.jsonl', lines(200_000));
    const s = new JsonlSource(p);
    await s.open();
    let n = 0;
    for await (const e of s.scan()) {
      if (n++ === 10) truncateSync(p, 1000);
      void e;
    }
    const info = s.info();
    await s.close();
    const f = info.findings.find((x) => x.family === 'read');
    expect(f?.severity).toBe('error');
    expect(f?.message).toMatch(/truncated or replaced while being read/);
  });
  it('a JSON array: the same', async () => {
    const p = write('shrinks.json', `[${Array.from({ length: 100_000 }, (_, i) => JSON.stringify({ id: i, text: 'wheel truing' })).join(',\n')}]`);
    const s = new JsonArraySource(p, { chunkBytes: 64 * 1024 });
    await s.open();
    const indexing = s.index({ onProgress: (pr) => pr.done > 100_000 && existsSync(p) && truncateSync(p, 50_000) });
    const info = await indexing;
    await s.close();
    expect(info.findings.some((f) => f.family === 'read' && f.severity === 'error' && /truncated or replaced/.test(f.message))).toBe(true);
  });
});

describe('Parquet footers that claim more than the file can hold', () => {
  let base: Uint8Array;
  beforeAll(() => {
    const table = tableFromArrays({ id: Int32Array.from({ length: 50 }, (_, i) => i), text: Array.from({ length: 50 }, (_, i) => `brake cable ${i}`) });
    base = pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(table, 'stream')));
  });
  for (const rows of [2n ** 40n, 50_000_000n]) {
    it(`a row group claiming ${rows} rows is refused at open, before any entry exists`, async () => {
      const p = write(`claims-${rows}.parquet`, withClaimedRows(base, 0, rows));
      const before = process.memoryUsage().rss;
      const t = Date.now();
      const { entries, info } = await scanAll(new ParquetSource(p));
      expect(Date.now() - t).toBeLessThan(10_000);
      expect(process.memoryUsage().rss - before).toBeLessThan(200 << 20);
      expect(entries).toEqual([]);
      expect(info.entries).toBe(0);
      const f = info.findings.find((x) => x.rule === 'read-footer-invalid');
      expect(f?.message).toMatch(new RegExp(`row group 0 claims ${rows} rows, more than a \\d+-byte file can hold`));
    });
  }
  it('the unpatched file reads all 50 rows (the patch is the only difference)', async () => {
    const { entries, info } = await scanAll(new ParquetSource(write('sound.parquet', withClaimedRows(base, 0, 50n))));
    expect(entries.filter((e) => e.value !== undefined)).toHaveLength(50);
    expect(info.findings).toEqual([]);
  });
  it('large_string_map.brotli.parquet (parquet-testing): refused up front from its footer-declared size', async () => {
    const p = join(requireTestdata('parquet'), 'large_string_map.brotli.parquet');
    const s = new ParquetSource(p);
    const t = Date.now();
    const info = await s.open();
    const f = info.findings.find((x) => x.rule === 'read-unsupported');
    expect(f?.message).toMatch(/row group 0 decodes to 2\.0 GiB by its footer, over the 1\.0 GiB limit/);
    const rows = await s.read(0, 2);
    await s.close();
    expect(Date.now() - t).toBeLessThan(5000);
    expect(rows.every((r) => r.value === undefined)).toBe(true);
  });
});

describe('deep nesting in a JSON array is refused like a JSON Lines line', () => {
  it('an element nested 100,000 levels deep: array-element-syntax naming the 10,000 cap', async () => {
    const deep = '['.repeat(100_000) + ']'.repeat(100_000);
    const p = write('deep.json', `[{"id": 1}, ${deep}, {"id": 3}]`);
    const { entries } = await scanAll(new JsonArraySource(p));
    expect(entries).toHaveLength(3);
    expect(entries[0].value).toEqual({ id: 1 });
    expect(entries[2].value).toEqual({ id: 3 });
    expect(entries[1].value).toBeUndefined();
    expect(entries[1].findings.map((f) => f.message)).toEqual([expect.stringMatching(/nests deeper than 10000 levels/)]);
  });
  it('10,000 levels still read', async () => {
    const ok = '['.repeat(10_000) + ']'.repeat(10_000);
    const { entries } = await scanAll(new JsonArraySource(write('deep-ok.json', `[${ok}]`)));
    expect(entries[0].value).toBeDefined();
  });
});

describe('a million tiny bad lines', () => {
  it('are read a slice at a time: the scan fits a 128 MB heap, every line gets its finding', async () => {
    const p = write('tiny.jsonl', 'x\n'.repeat(1_000_000));
    const child = join(dir, 'scan-child.cjs');
    await build({ entryPoints: [join(__dirname, 'scan-child.ts')], outfile: child, bundle: true, platform: 'node', format: 'cjs', logLevel: 'error' });
    // Built all at once, the 2 MB of lines would be a million entries held together (about 500 MB).
    const r = spawnSync(process.execPath, ['--max-old-space-size=128', child, p], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.stdout.trim()).toBe('1000000 1000000');
  });
});

describe('temporary copies never outlive their shard', () => {
  const mine = () => readdirSync(tmpdir()).filter((n) => n.startsWith(`shardwise-${process.pid}-`));
  it('closing a compressed shard removes its decompressed copy', async () => {
    const before = mine().length;
    const s = new JsonlSource(write('copy.jsonl.gz', gzipSync(lines(100))));
    await s.index();
    expect(mine().length).toBe(before + 1);
    await s.close();
    expect(mine().length).toBe(before);
  });
});
