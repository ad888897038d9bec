import { spawnSync } from 'node:child_process';
import { chmodSync, readFileSync, statSync } from 'node:fs';
import { build } from 'esbuild';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { Entry } from '../../../../src/engine/sources/source.js';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import { JSONL_RULES } from '../../../../src/engine/sources/jsonlRules.js';
import { gzip, readAll, scanAll, tempDir, writeShard, zstdCommand, zstdFrame, zstdRawFrame } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
let n = 0;
const shard = (data: Uint8Array | string, ending = '.jsonl') => writeShard(tmp.dir, `s${n++}${ending}`, data);

const rules = (e: Entry) => e.findings.map((f) => f.rule);

async function both(path: string, opts: { maxLineBytes?: number } = {}) {
  const a = await readAll(path, opts);
  const b = await scanAll(path, opts);
  // The indexed read and the index-free scan must describe the file identically.
  expect(b.entries).toEqual(a.entries);
  return a;
}

describe('JSON Lines rules (jsonlines.org)', () => {
  it('one JSON value per line; the last line may lack its terminator', async () => {
    const { entries, info } = await both(shard('{"a":1}\n{"b":2}'));
    expect(info.entries).toBe(2);
    expect(info.complete).toBe(true);
    expect(entries.map((e) => e.value)).toEqual([{ a: 1 }, { b: 2 }]);
    expect(entries.map((e) => [e.entry, e.record, e.line, e.column, e.byteOffset])).toEqual([
      [0, 0, 1, 1, 0],
      [1, 1, 2, 1, 8],
    ]);
    expect(entries.flatMap(rules)).toEqual([]);
  });

  it('a file ending in \\n has no extra empty entry; an empty file is an empty shard', async () => {
    expect((await both(shard('{"a":1}\n'))).info.entries).toBe(1);
    expect((await both(shard(''))).info.entries).toBe(0);
  });

  it('tolerates \\r\\n as trailing white space', async () => {
    const { entries } = await both(shard('{"a":"x"}\r\n[1]\r\n'));
    expect(entries.map((e) => e.text)).toEqual(['{"a":"x"}', '[1]']);
    expect(entries[0].findings).toEqual([]);
    expect(rules(entries[1])).toEqual(['record-not-object']);
  });

  it('reports blank lines (a blank line is not a value; NDJSON readers skip them) without failing', async () => {
    const { entries } = await both(shard('{"a":1}\n\n  \t\n{"a":2}\n'));
    expect(entries.map(rules)).toEqual([[], ['line-blank'], ['line-blank'], []]);
    expect(entries.map((e) => e.record)).toEqual([0, null, null, 1]);
    expect(entries[1].findings[0]).toMatchObject({ family: 'json', severity: 'warning', line: 2, entry: 1, column: 1, record: null });
  });

  it('reports a UTF-8 byte order mark and reads past it (JSON Lines: no BOM; RFC 8259 §8.1)', async () => {
    const data = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from('{"a":1}\n{"b":2}\n')]);
    const { entries } = await both(shard(data));
    expect(entries.map(rules)).toEqual([['bom-present'], []]);
    expect(entries[0].value).toEqual({ a: 1 });
    expect(entries[0].record).toBe(0);
  });

  it('reports invalid UTF-8 at its column and still counts the record (JSON Lines: UTF-8)', async () => {
    const data = Buffer.concat([Buffer.from('{"名":"a'), Buffer.from([0xff]), Buffer.from('b"}\n{"x":1}\n')]);
    const { entries } = await both(shard(data));
    expect(rules(entries[0])).toEqual(['utf8-invalid']);
    // { " 名 " : " a  → the bad byte is the 8th UTF-16 code unit
    expect(entries[0].findings[0]).toMatchObject({ family: 'encoding', severity: 'error', column: 8, record: 0 });
    expect(entries[0].value).toEqual({ 名: 'a\ufffdb' });
    expect(entries[1].record).toBe(1);
  });
});

describe('RFC 8259 facts through the source', () => {
  it('flags duplicate names with the later member (§4)', async () => {
    const { entries } = await both(shard('{"role":"user","role":"assistant"}\n'));
    expect(entries[0].findings).toEqual([
      expect.objectContaining({ rule: 'key-duplicate', family: 'json', severity: 'warning', pointer: '/role', column: 16, record: 0, line: 1, entry: 0 }),
    ]);
    expect(entries[0].value).toEqual({ role: 'assistant' });
  });

  it('flags integers beyond ±(2^53−1) (§6)', async () => {
    const { entries } = await both(shard('{"id":9007199254740993}\n{"id":9007199254740991}\n'));
    expect(entries[0].findings).toEqual([expect.objectContaining({ rule: 'number-unsafe', pointer: '/id', column: 7 })]);
    expect(entries[1].findings).toEqual([]);
  });

  it('flags unpaired surrogate escapes (§8.2)', async () => {
    const { entries } = await both(shard('{"t":"\\ud800x"}\n{"t":"\\ud83d\\udeb2"}\n'));
    expect(entries[0].findings).toEqual([expect.objectContaining({ rule: 'surrogate-unpaired', family: 'encoding', pointer: '/t', column: 7 })]);
    expect(entries[1].findings).toEqual([]);
    expect(entries[1].value).toEqual({ t: '🚲' });
  });
});

describe('the source rules', () => {
  it('json-syntax carries the column and the line is no record', async () => {
    const { entries } = await both(shard('{"a":1}\n{"a":1,}\n{"a":2}\n'));
    expect(entries[1].findings).toEqual([
      expect.objectContaining({ rule: 'json-syntax', severity: 'error', column: 8, line: 2, entry: 1, record: null, pointer: null }),
    ]);
    expect(entries[1].value).toBeUndefined();
    expect(entries.map((e) => e.record)).toEqual([0, null, 1]);
  });

  it('record-not-object points at the value and still counts a record', async () => {
    const { entries } = await both(shard('  "just text"\n'));
    expect(entries[0].findings).toEqual([expect.objectContaining({ rule: 'record-not-object', column: 3, pointer: '', record: 0 })]);
  });

  it('line-too-long: the line is not read and holds no record', async () => {
    const long = `{"t":"${'x'.repeat(200)}"}`;
    const { entries } = await both(shard(`{"a":1}\n${long}\n{"a":2}`), { maxLineBytes: 100 });
    expect(entries.map(rules)).toEqual([[], ['line-too-long'], []]);
    expect(entries[1].text).toBeUndefined();
    expect(entries[1].findings[0].message).toMatch(/208 bytes/) // 6 + 200 + 2;
    expect(entries.map((e) => e.record)).toEqual([0, null, 1]);
  });

  it('exports a rule table that holds each rule once and is what the source raises', async () => {
    const ids = JSONL_RULES.map((r) => r.id);
    expect(new Set(ids).size).toBe(ids.length);
    // A line that breaks each line rule, and files the reader gives up on: the rules they raise.
    const lines = [
      '{"a":1}',
      '',
      '{"a":',
      `{"t":"${'x'.repeat(200)}"}`,
      '"just text"',
      '{"n": 9007199254740993}',
      '{"k": 1, "k": 2}',
      Buffer.from([0x7b, 0x22, 0x62, 0x22, 0x3a, 0x22, 0xff, 0x22, 0x7d]).toString('latin1'),
      '\ufeff{"a":2}',
      '{"s": "\\ud800"}',
    ];
    const text = Buffer.concat(lines.map((l, i) => (i === 7 ? Buffer.from(`${l}\n`, 'latin1') : Buffer.from(`${l}\n`, 'utf8'))));
    const { entries, info } = await both(shard(text), { maxLineBytes: 100 });
    const fromLines = new Set([...entries.flatMap(rules), ...info.findings.map((f) => f.rule)]);
    const gz = gzip(Buffer.from('{"a":1}\n'.repeat(1000)));
    const fromFiles = new Set([
      ...(await readAll(shard(''))).info.findings.map((f) => f.rule),
      ...(await readAll(shard(gz.subarray(0, gz.length - 20), '.jsonl.gz'))).info.findings.map((f) => f.rule),
    ]);
    expect([...fromLines].sort()).toEqual(['bom-present', 'json-syntax', 'key-duplicate', 'line-blank', 'line-too-long', 'number-unsafe', 'record-not-object', 'surrogate-unpaired', 'utf8-invalid']);
    expect([...fromFiles].sort()).toEqual(['read-corrupt', 'read-empty']);
    // A safety limit (free disk space, the compression ratio) and a stalled read are not made here;
    // each is raised by name in the code (the decompressor's limits; the workers' watchdog).
    const rest = ids.filter((id) => !fromLines.has(id) && !fromFiles.has(id));
    expect(rest.sort()).toEqual(['read-limit', 'read-stalled']);
    const code = [join(__dirname, '../../../../src/engine/sources/jsonl.ts'), join(__dirname, '../../../../src/node/pool.ts')].map((f) => readFileSync(f, 'utf8')).join('\n');
    for (const id of rest) expect(code, id).toMatch(new RegExp(`(?:fileFinding|jsonlRule)\\('${id}'`));
  });

  it('never writes to the shard', async () => {
    const p = shard('{"a":1}\n');
    const before = statSync(p).mtimeMs;
    await both(p);
    expect(statSync(p).mtimeMs).toBe(before);
    expect(readFileSync(p, 'utf8')).toBe('{"a":1}\n');
  });
});

describe('opening', () => {
  it('rejects a missing file, a folder and an unreadable file with a message that starts with the path', async () => {
    const missing = join(tmp.dir, 'nope.jsonl');
    await expect(new JsonlSource(missing).open()).rejects.toThrow(new RegExp(`^${missing.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: no such file`));
    await expect(new JsonlSource(tmp.dir).open()).rejects.toThrow(/^.*: is a folder/);
  });

  it('rejects a file the user may not read with a message that starts with the path (the read runs as an unprivileged user)', async () => {
    // The open runs in a child process; as root (as in CI) setpriv (util-linux) drops it to nobody,
    // so that the permission check is the kernel's and root does not read past the mode.
    const child = join(tmp.dir, 'open-child.cjs');
    await build({ entryPoints: [join(__dirname, 'open-child.ts')], outfile: child, bundle: true, platform: 'node', format: 'cjs', logLevel: 'error' });
    chmodSync(tmp.dir, 0o755);
    const openAs = (path: string): { opened: boolean; message?: string; sizeBytes?: number } => {
      const asRoot = process.getuid?.() === 0;
      const [cmd, args] = asRoot
        ? ['setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, child, path]]
        : [process.execPath, [child, path]];
      const r = spawnSync(cmd as string, args as string[], { encoding: 'utf8' });
      expect(r.status, r.stderr).toBe(0);
      return JSON.parse(r.stdout);
    };
    const locked = shard('{}\n');
    const readable = shard('{}\n');
    chmodSync(locked, 0o000);
    try {
      // The same child, the same user, a file it may read: only the mode differs.
      expect(openAs(readable)).toEqual({ opened: true, sizeBytes: 3 });
      const refused = openAs(locked);
      expect(refused.opened).toBe(false);
      expect(refused.message).toMatch(new RegExp(`^${locked.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: permission denied`));
    } finally {
      chmodSync(locked, 0o644);
    }
  });

  it('describes the file cheaply before indexing', async () => {
    const p = shard('{"a":1}\n{"a":2}\n');
    const src = new JsonlSource(p);
    const info = await src.open();
    expect(info).toMatchObject({ format: 'jsonl', path: p, sizeBytes: 16, entries: 0, complete: false });
    await expect(src.read(0, 1)).rejects.toThrow(/not indexed yet/);
    await src.close();
  });
});

describe('compressed shards', () => {
  const content = Buffer.from('{"a":1}\n\n{"a":2\n{"a":3}\n');

  it('reads gzip like the plain file (RFC 1952 via node:zlib)', async () => {
    const plain = await both(shard(content));
    const gz = await both(shard(gzip(content), '.jsonl.gz'));
    expect(gz.entries).toEqual(plain.entries);
    expect(gz.info.facts?.compression).toBe('gzip');
    expect(gz.info.findings).toEqual([]);
  });

  it('reads a zstd frame of raw blocks (RFC 8878 §3.1.1.2) like the plain file', async () => {
    const plain = await both(shard(content));
    const zs = await both(shard(zstdRawFrame(content), '.jsonl.zst'));
    expect(zs.entries).toEqual(plain.entries);
    expect(zs.info.findings).toEqual([]);
  });

  it('reads RLE blocks (RFC 8878 Block_Type 1), including long runs of them', async () => {
    const enc = new TextEncoder();
    const blocks = [{ raw: enc.encode('{"t":"') }, ...Array.from({ length: 40 }, () => ({ rle: 0x61, count: 128 * 1024 })), { raw: enc.encode('"}\n{"b":2}\n') }];
    const r = await both(shard(zstdFrame(blocks), '.jsonl.zst'));
    expect(r.info.findings).toEqual([]);
    expect(r.entries.map((e) => e.record)).toEqual([0, 1]);
    expect((r.entries[0].value as { t: string }).t).toBe('a'.repeat(40 * 128 * 1024));
    expect(r.entries[1].value).toEqual({ b: 2 });
  });

  it('reads the output of the zstd command (the reference compressor)', async () => {
    const z = zstdCommand(content);
    const plain = await both(shard(content));
    expect((await both(shard(z, '.jsonl.zst'))).entries).toEqual(plain.entries);
  });

  it('keeps what could be read from a truncated gzip stream and reports read-corrupt', async () => {
    const big = Buffer.from(Array.from({ length: 3000 }, (_, i) => `{"i":${i},"note":"brake pads ${i}"}\n`).join(''));
    const gz = gzip(big);
    const cut = gz.subarray(0, Math.floor(gz.length * 0.6));
    const r = await readAll(shard(cut, '.jsonl.gz'));
    expect(r.info.findings).toEqual([expect.objectContaining({ rule: 'read-corrupt', family: 'read', severity: 'error' })]);
    expect(r.info.entries).toBeGreaterThan(100);
    expect(r.entries.slice(0, -1).every((e, i) => (e.value as { i: number }).i === i)).toBe(true);
    const s = await scanAll(shard(cut, '.jsonl.gz'));
    expect(s.info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
    expect(s.entries.length).toBe(r.entries.length);
  });

  it('reports read-corrupt for a truncated zstd frame and for garbage', async () => {
    const frame = zstdRawFrame(content);
    const r = await readAll(shard(frame.subarray(0, frame.length - 5), '.jsonl.zst'));
    expect(r.info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
    const g = await readAll(shard(Buffer.from('not compressed at all\n'), '.jsonl.zst'));
    expect(g.info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
    const gg = await readAll(shard(Buffer.from('not compressed at all\n'), '.jsonl.gz'));
    expect(gg.info.findings.map((f) => f.rule)).toEqual(['read-corrupt']);
  });

  it('an empty compressed file, or a stream of empty content, is an empty shard: one read-empty error, as for every format', async () => {
    for (const [data, ending] of [
      [Buffer.alloc(0), '.jsonl.gz'],
      [gzip(Buffer.alloc(0)), '.jsonl.gz'],
      [Buffer.alloc(0), '.jsonl.zst'],
      [zstdRawFrame(Buffer.alloc(0)), '.jsonl.zst'],
    ] as const) {
      const r = await both(shard(data, ending));
      expect([r.info.entries, r.info.findings.map((f) => [f.rule, f.severity])]).toEqual([0, [['read-empty', 'error']]]);
    }
  });

  it('reads concatenated gzip members as one stream (RFC 1952 §2.2: a file is a series of members)', async () => {
    const r = await both(shard(Buffer.concat([gzip(Buffer.from('{"a":1}\n')), gzip(Buffer.from('{"a":2}\n'))]), '.jsonl.gz'));
    expect(r.entries.map((e) => e.value)).toEqual([{ a: 1 }, { a: 2 }]);
  });

  it('removes its temporary copy on close', async () => {
    const src = new JsonlSource(shard(gzip(content), '.ndjson.gz'));
    await src.index();
    const dir = (src as unknown as { tempDir: string }).tempDir;
    expect(statSync(dir).isDirectory()).toBe(true);
    await src.close();
    expect(() => statSync(dir)).toThrow();
  });
});
