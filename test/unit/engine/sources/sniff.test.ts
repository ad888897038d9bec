// Formats known by their bytes. Golden files (../shared/testdata, SOURCES.md: apache/parquet-testing
// data/ at 1a2a7512 and apache/arrow-testing data/arrow-ipc-stream/integration at 9cfebfef) are
// reached through symlinks with a wrong or no ending — linked, never copied; the folder is deleted
// after the tests — and must open with the reader their magic numbers name (Parquet `PAR1`/`PARE`,
// parquet-format; Arrow IPC file `ARROW1` and stream continuation marker 0xFFFFFFFF or, before
// 0.15, a bare length: the Arrow columnar format's IPC chapter), with what their own names give.
import { PassThrough } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { createSource, FORMATS, formatOf, sniffFormat, UnsupportedFileError } from '../../../../src/engine/sources/index.js';
import { run } from '../../../../src/cli/main.js';
import { projectRoot, requireTestdata } from './testdata.js';
import { zstdCommand, zstdRawFrame } from './jsonl-helpers.js';

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shardwise-sniff-'));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

interface Opened {
  format: string;
  entries: number;
  findings: string[];
  /** The first rows' values, as JSON, when asked for. */
  values?: string[];
}

async function opened(p: string, rows = 0): Promise<Opened> {
  const src = createSource(p);
  try {
    await src.open();
    const info = await src.index();
    const r: Opened = { format: info.format, entries: info.entries, findings: info.findings.map((f) => f.rule) };
    if (rows > 0) r.values = (await src.read(0, Math.min(rows, info.entries))).map((e) => JSON.stringify(e.value ?? null));
    return r;
  } finally {
    await src.close();
  }
}

let n = 0;
/** A symlink to `target` named `name` (an empty name: a file name with no ending at all). */
function linkAs(target: string, name: string): string {
  const p = path.join(dir, `link${n++}${name}`);
  fs.symlinkSync(path.resolve(target), p);
  return p;
}

function write(name: string, data: string | Uint8Array): string {
  const p = path.join(dir, name);
  fs.writeFileSync(p, data);
  return p;
}

const parquetDir = requireTestdata('parquet');
const knownParquet = JSON.parse(fs.readFileSync(new URL('./parquet.known-failures.json', import.meta.url), 'utf8')) as { files: string[] };
// Every Parquet file the reader opens today (the known-failures list names those it answers with an error).
const PARQUET = fs.readdirSync(parquetDir).filter((f) => f.endsWith('.parquet') && !knownParquet.files.includes(f));
const ENCRYPTED = fs.readdirSync(parquetDir).filter((f) => f.endsWith('.parquet.encrypted'));
const integration = requireTestdata('arrow/ipc-stream/integration');
const VERSIONS = fs.readdirSync(integration).filter((v) => fs.statSync(path.join(integration, v)).isDirectory());

describe('golden Parquet files under wrong names (apache/parquet-testing)', () => {
  it('the sample is the whole set of files that open', () => expect(PARQUET.length).toBeGreaterThan(60));
  it.each(PARQUET)('%s', async (file) => {
    const want = await opened(path.join(parquetDir, file));
    expect(want.format).toBe('parquet');
    expect(await opened(linkAs(path.join(parquetDir, file), '.jsonl'))).toEqual(want);
    expect(await opened(linkAs(path.join(parquetDir, file), ''))).toEqual(want);
  });
});

describe('golden Arrow IPC files and streams under wrong names (apache/arrow-testing integration)', () => {
  it.each(VERSIONS)('every case of %s', async (version) => {
    const folder = path.join(integration, version);
    const names = fs.readdirSync(folder);
    const stems = names.filter((f) => f.endsWith('.stream')).map((f) => f.slice(0, -'.stream'.length)).filter((s) => names.includes(`${s}.arrow_file`));
    expect(stems.length).toBeGreaterThan(0);
    let clean = 0;
    for (const stem of stems) {
      const base = path.join(folder, stem);
      const file = await opened(`${base}.arrow_file`, 5);
      const stream = await opened(`${base}.stream`, 5);
      expect(file.format, stem).toBe('arrow-file');
      expect(stream.format, stem).toBe('arrow-stream');
      expect(await opened(linkAs(`${base}.arrow_file`, '.parquet'), 5), stem).toEqual(file);
      expect(await opened(linkAs(`${base}.arrow_file`, ''), 5), stem).toEqual(file);
      expect(await opened(linkAs(`${base}.stream`, ''), 5), stem).toEqual(stream);
      // The common dataset library's cache names its streams `data-00000-of-00001.arrow`.
      const asArrow = await opened(linkAs(`${base}.stream`, '-data-00000-of-00001.arrow'), 5);
      expect(asArrow, stem).toEqual(stream);
      if (stream.findings.length === 0) clean++;
    }
    // Big-endian files are refused with a finding whatever their name; every other folder has clean cases.
    expect(clean > 0, `${clean} of ${stems.length} cases open without a finding`).toBe(!version.includes('bigendian'));
  });

  it('a stream named .arrow gives no finding and the rows it gives as .stream (0.14.1: the pre-0.15 framing)', async () => {
    for (const version of ['0.14.1', '1.0.0-littleendian', 'cpp-21.0.0']) {
      const base = path.join(integration, version, 'generated_primitive');
      const asStream = await opened(`${base}.stream`, 50);
      const asArrow = await opened(linkAs(`${base}.stream`, '.arrow'), 50);
      expect(asArrow.format).toBe('arrow-stream');
      expect(asArrow.findings).toEqual([]);
      expect(asArrow.entries).toBeGreaterThan(0);
      expect(asArrow).toEqual(asStream);
    }
  });
});

describe('encrypted Parquet (parquet-testing *.parquet.encrypted; parquet-format Encryption.md)', () => {
  it('lists the files', () => expect(ENCRYPTED.length).toBeGreaterThanOrEqual(8));
  it.each(ENCRYPTED)('%s opens to one read-unsupported finding and no entries, under any name', async (file) => {
    for (const p of [path.join(parquetDir, file), linkAs(path.join(parquetDir, file), '')]) {
      const src = createSource(p);
      const info = await src.open();
      await src.close();
      expect(info.format).toBe('parquet');
      expect(info.entries).toBe(0);
      expect(info.findings.map((f) => [f.rule, f.family, f.severity])).toEqual([['read-unsupported', 'read', 'error']]);
      expect(info.findings[0].message).toMatch(/^encrypted Parquet \((PARE|plaintext footer)\): .*Shardwise does not decrypt files$/);
    }
  });
});

describe('JSON Lines or one JSON array, from the text itself (jsonlines.org; RFC 8259)', () => {
  const records = Array.from({ length: 25 }, (_, i) => ({ messages: [{ role: 'user', content: `How do I adjust brake ${i}?` }] }));
  const lines = `${records.map((r) => JSON.stringify(r)).join('\n')}\n`;
  const pretty = JSON.stringify(records, null, 2);

  it('JSON Lines named .json reads as JSON Lines, record for record', async () => {
    const r = await opened(write('chats.json', lines), 30);
    expect(r).toMatchObject({ format: 'jsonl', entries: 25, findings: [] });
    expect(r.values).toEqual(records.map((x) => JSON.stringify(x)));
  });
  it('a pretty-printed array reads as an array; so does a one-line array, even named .jsonl', async () => {
    expect(await opened(write('array.json', pretty))).toMatchObject({ format: 'json-array', entries: 25, findings: [] });
    expect(await opened(write('one-line.jsonl', `${JSON.stringify(records)}\n`))).toMatchObject({ format: 'json-array', entries: 25 });
    expect(sniffFormat(write('one-line-no-newline', JSON.stringify(records))).format).toBe('json-array');
  });
  it('arrays one a line are JSON Lines; an array whose first line holds elements is an array', () => {
    expect(sniffFormat(write('rows.json', '[1, 2]\n[3, 4]\n[5]\n')).format).toBe('jsonl');
    expect(sniffFormat(write('rows-crlf', '\r\n[1, 2]\r\n\r\n["a"]\r\n')).format).toBe('jsonl');
    expect(sniffFormat(write('wrapped.json', '[{"a": 1}, {"a": 2},\n {"a": 3}]\n')).format).toBe('json-array');
    expect(sniffFormat(write('leading-commas.json', '[{"a": 1}\n,{"a": 2}\n]\n')).format).toBe('json-array');
    expect(sniffFormat(write('objects.json', '{"a": 1}\n{"a": 2}\n')).format).toBe('jsonl');
  });
  it('a first line longer than the first head read still decides (read on up to 1 MiB, never the whole file)', () => {
    const long = JSON.stringify(Array.from({ length: 12_000 }, (_, i) => `spoke ${i}`));
    expect(long.length).toBeGreaterThan(64 * 1024);
    expect(sniffFormat(write('long-first-line.json', `${long}\n${long}\n`)).format).toBe('jsonl');
    expect(sniffFormat(write('long-array.json', `${long}\n`)).format).toBe('json-array');
  });
  it('a UTF-8 byte order mark before the text still sniffs as text; the reader reports the mark', async () => {
    const src = createSource(write('bom.json', `\uFEFF${lines}`));
    const info = await src.index();
    const first = await src.read(0, 1);
    await src.close();
    expect(info).toMatchObject({ format: 'jsonl', entries: 25 });
    expect(first[0].findings.map((f) => f.rule)).toEqual(['bom-present']);
    expect(first[0].value).toEqual(records[0]);
    expect(sniffFormat(write('bom-array', `\uFEFF${pretty}`)).format).toBe('json-array');
  });
  it('gzip (RFC 1952) JSON Lines renamed .gz or with no ending reads, decompressed', async () => {
    const gz = gzipSync(Buffer.from(lines));
    for (const name of ['train.gz', 'train-00001-of-00004', 'train.parquet']) {
      const p = write(name, gz);
      expect(sniffFormat(p)).toEqual({ format: 'jsonl', compression: 'gzip' });
      expect(await opened(p)).toMatchObject({ format: 'jsonl', entries: 25, findings: [] });
    }
  });
  it('a .json.gz array reads as an array, decompressed; a .json.gz of lines as JSON Lines', async () => {
    const p = write('rows.json.gz', gzipSync(Buffer.from(pretty)));
    expect(sniffFormat(p)).toEqual({ format: 'json-array', compression: 'gzip' });
    const r = await opened(p, 3);
    expect(r).toMatchObject({ format: 'json-array', entries: 25, findings: [] });
    expect(r.values).toEqual(records.slice(0, 3).map((x) => JSON.stringify(x)));
    expect(sniffFormat(write('lines.json.gz', gzipSync(Buffer.from(lines))))).toEqual({ format: 'jsonl', compression: 'gzip' });
  });
  it('zstd (RFC 8878) arrays and lines under any name read, decompressed', async () => {
    // Both the Debian zstd command's output and a frame of raw blocks, which every decoder reads.
    const makers: [string, (s: string) => Uint8Array][] = [
      ['command', (s) => zstdCommand(Buffer.from(s))],
      ['raw', (s) => zstdRawFrame(Buffer.from(s))],
    ];
    for (const [how, zstd] of makers) {
      const array = write(`rows-${how}.json.zst`, zstd(pretty));
      expect(sniffFormat(array)).toEqual({ format: 'json-array', compression: 'zstd' });
      expect(await opened(array)).toMatchObject({ format: 'json-array', entries: 25, findings: [] });
      const noName = write(`shard-zstd-${how}`, zstd(lines));
      expect(sniffFormat(noName)).toEqual({ format: 'jsonl', compression: 'zstd' });
      expect(await opened(noName)).toMatchObject({ format: 'jsonl', entries: 25, findings: [] });
    }
  });
  it('a cut-short .json.gz array keeps the elements before the break and reports it', async () => {
    const gz = gzipSync(Buffer.from(pretty));
    const r = await opened(write('cut.json.gz', gz.subarray(0, Math.floor(gz.length * 0.6))));
    expect(r.format).toBe('json-array');
    expect(r.entries).toBeGreaterThan(0);
    expect(r.entries).toBeLessThan(25);
    expect(r.findings).toContain('read-corrupt');
    expect(r.findings).toContain('array-structure');
  });
  it('an empty file and white space open as their names say (or as JSON Lines without one)', () => {
    expect(sniffFormat(write('empty.json', '')).format).toBe('json-array');
    expect(sniffFormat(write('empty', '')).format).toBe('jsonl');
    expect(sniffFormat(write('blank.jsonl', '\n\n')).format).toBe('jsonl');
  });
  it('the start decides before the end: text ending in "PAR1" is text; a damaged start before a Parquet end is Parquet, with a finding', async () => {
    expect(sniffFormat(write('ends-par1', '{"note": "x"}\nPAR1')).format).toBe('jsonl');
    const damaged = write('damaged-start', Buffer.concat([Buffer.alloc(16, 0x07), Buffer.from([4, 0, 0, 0]), Buffer.from('PAR1')]));
    expect(await opened(damaged)).toEqual({ format: 'parquet', entries: 0, findings: ['read-footer-invalid'] });
  });
  it('a text shard whose first line is broken still opens under its text name', () => {
    expect(sniffFormat(write('broken.jsonl', 'oops\n{"a": 1}\n')).format).toBe('jsonl');
  });
});

describe('what none of the formats fits is refused, naming what was found', () => {
  it('a PNG image, even named .jsonl', () => {
    // PNG signature, ISO/IEC 15948 §5.2.
    const p = write('picture.jsonl', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]));
    expect(() => createSource(p)).toThrow(UnsupportedFileError);
    expect(() => createSource(p)).toThrow(/neither JSON Lines, a JSON array, Parquet, an Arrow IPC file nor an Arrow IPC stream; it starts with bytes 89 50 4e 47 0d 0a 1a 0a \(a PNG image\?\)/);
  });
  it('random bytes', () => {
    let x = 0x2545f491;
    const bytes = Buffer.alloc(4096, 0).map(() => ((x = (x * 1103515245 + 12345) >>> 0) >>> 24) & 0xff);
    bytes[0] = 0x07; // not a magic number of any format above
    bytes[3] = 0x80; // a negative length, were it Arrow
    const p = write('noise.arrow', bytes);
    expect(() => sniffFormat(p)).toThrow(UnsupportedFileError);
    expect(() => sniffFormat(p)).toThrow(/it starts with bytes 07 [0-9a-f]{2} [0-9a-f]{2} 80/);
  });
  it('text that is not JSON, with no text name', () => {
    expect(() => sniffFormat(write('notes', 'name,size\nchain,11\n'))).toThrow(/text that is not JSON: it starts with "name,size"/);
  });
  it('gzip around something that is not JSON text', () => {
    expect(() => sniffFormat(write('pic.jsonl.gz', gzipSync(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0]))))).toThrow(
      /gzip-compressed data that is not JSON text: it starts with bytes 89 50 4e 47/,
    );
  });
  it('a missing file is a clear error, not a refusal of its bytes', () => {
    expect(() => createSource(path.join(dir, 'missing.jsonl'))).toThrow(/missing\.jsonl: cannot open \(ENOENT\)/);
  });
});

describe('the CLI reports the sniffed format and exits 1 on findings, 2 only on refusal', () => {
  async function cli(...args: string[]): Promise<{ code: number; out: string; err: string }> {
    const out = new PassThrough();
    const err = new PassThrough();
    let o = '';
    let e = '';
    out.on('data', (c) => (o += c));
    err.on('data', (c) => (e += c));
    const code = await run(['check', ...args, '--format', 'json', '--in-thread'], out, err);
    return { code, out: o, err: e };
  }

  it('encrypted Parquet exits 1 with one read-unsupported finding', async () => {
    const r = await cli(linkAs(path.join(parquetDir, 'uniform_encryption.parquet.encrypted'), ''));
    expect(r.err).toBe('');
    expect(r.code).toBe(1);
    const report = JSON.parse(r.out);
    expect(report.files[0].format).toBe('parquet');
    expect(report.files[0].findings.map((f: { rule: string }) => f.rule)).toEqual(['read-unsupported']);
  });
  it('JSON Lines named .json and an Arrow stream named .arrow report their real formats', async () => {
    const jsonl = write('cli-chats.json', '{"text": "a"}\n{"text": "b"}\n');
    const stream = linkAs(path.join(integration, '1.0.0-littleendian', 'generated_primitive.stream'), '.arrow');
    const r = await cli(jsonl, stream);
    const report = JSON.parse(r.out);
    expect(report.files.map((f: { format: string }) => f.format)).toEqual(['jsonl', 'arrow-stream']);
    expect(report.files[1].findings.filter((f: { family: string }) => f.family === 'read')).toEqual([]);
  });
  it('a PNG exits 2 naming what it found', async () => {
    const r = await cli(write('cli-picture.parquet', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0])));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/cli-picture\.parquet: not a shard Shardwise reads: .*\(a PNG image\?\)/);
  });
});

describe('the endings table and package.json agree', () => {
  const pkg = JSON.parse(fs.readFileSync(path.join(projectRoot, 'package.json'), 'utf8'));
  const editors = pkg.contributes.customEditors as { viewType: string; priority: string; selector: { filenamePattern: string }[] }[];
  const claimed = (priority: string) => new Set(editors.filter((e) => e.priority === priority).flatMap((e) => e.selector.map((s) => s.filenamePattern)));
  const endings = FORMATS.flatMap((f) => f.endings);
  const whenText = (pkg.contributes.menus['explorer/context'] as { command: string; when: string }[]).find((m) => m.command === 'shardwise.openRecordView')!.when;
  const m = /^resourceFilename =~ \/(.*)\/([a-z]*)$/.exec(whenText);

  it('every ending is claimed by an editor selector: by default, or deliberately by "Open With…" (.json, which is often edited as text)', () => {
    const byDefault = claimed('default');
    const byOption = claimed('option');
    for (const e of endings) expect(byDefault.has(`*${e}`) || (byOption.has(`*${e}`) && e === '.json'), e).toBe(true);
    // ...and no selector claims an ending the table does not know.
    for (const p of [...byDefault, ...byOption]) expect(endings.includes(p.replace(/^\*/, '')), p).toBe(true);
  });
  it('the explorer menu accepts every ending and nothing the table does not know', () => {
    expect(m, whenText).not.toBeNull();
    const re = new RegExp(m![1], m![2]);
    const others = ['.csv', '.txt', '.gz', '.zst', '.parquet.gz', '.arrow.zst', '.stream.gz', '.jsonlx', '.json5', '.arrow_file', '.tar.gz', '.zip', ''];
    const candidates = [...endings, ...endings.map((e) => e.toUpperCase()), ...endings.flatMap((e) => [`${e}.gz`, `${e}.zst`]), ...others];
    for (const c of candidates) expect(re.test(`shard${c}`), c).toBe(formatOf(`shard${c}`) !== null);
  });
});
