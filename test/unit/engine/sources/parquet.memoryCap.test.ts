// The memory cap per reader reaches the Parquet reader by each path a user sets it: the project
// file's `reading.memoryMiB`, the command line's `--memory-mib`, and the VS Code setting
// `shardwise.reading.memoryMiB` (declared in package.json with the project setting's bounds).
// The file is written at test time by parquet-wasm's writer: one row group of about 20 MiB.

import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { tableFromArrays, tableToIPC } from 'apache-arrow';
import * as pw from 'parquet-wasm/node';
import { parquetReadObjects } from 'hyparquet';
import { configFromValues, parseProjectFile, settingSpec } from '../../../../src/engine/project.js';
import { parseCommandLine, verbHelp, type Parsed } from '../../../../src/cli/options.js';
import { createSource } from '../../../../src/engine/sources/index.js';
import { ParquetSource } from '../../../../src/engine/sources/parquet.js';
import type { ByteReader } from '../../../../src/engine/sources/source.js';
import { projectRoot } from '../../helpers/build';

const settings = new Map<string, unknown>();
vi.mock('vscode', () => ({
  workspace: {
    getConfiguration: () => ({ get: (key: string, fallback: unknown) => (settings.has(key) ? settings.get(key) : fallback), inspect: () => undefined }),
    getWorkspaceFolder: () => undefined,
    asRelativePath: (u: { path: string }) => u.path,
    isTrusted: true,
  },
  Uri: { joinPath: (u: { path: string }, ...p: string[]) => ({ path: [u.path, ...p].join('/') }) },
}));

let dir: string;
let p: string;
const MIB = 1024 * 1024;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-parquet-cap-'));
  // Our own rows: 40,000 distinct repair notes of about 520 bytes, uncompressed, in one row group.
  const rows = 40_000;
  const note = Array.from({ length: rows }, (_, i) => `${i}: ${'true the rear wheel, then check the spoke tension '.repeat(10)}`);
  const props = new pw.WriterPropertiesBuilder().setCompression(pw.Compression.UNCOMPRESSED).setDictionaryEnabled(false).setMaxRowGroupSize(rows).build();
  p = join(dir, 'notes.parquet');
  writeFileSync(p, pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(tableFromArrays({ note }), 'stream')), props));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function firstRows(maxReaderBytes: number): Promise<{ rules: string[]; values: unknown[] }> {
  const src = createSource(p, { maxReaderBytes });
  const info = await src.open();
  const page = await src.read(0, 3);
  await src.close();
  return { rules: [...info.findings, ...page.flatMap((e) => e.findings)].map((f) => f.rule), values: page.map((e) => e.value) };
}

async function oracle(): Promise<unknown[]> {
  const b = readFileSync(p);
  return parquetReadObjects({ file: b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer, rowStart: 0, rowEnd: 3 });
}

describe('the memory cap per reader', () => {
  it('project file: reading.memoryMiB 16 refuses the 20 MiB row group; the default reads it as hyparquet does', async () => {
    const project = parseProjectFile('/p/shardwise.json', '/p', JSON.stringify({ reading: { memoryMiB: 16 } }));
    const capped = configFromValues(project.values).maxReaderBytes;
    expect(capped).toBe(16 * MIB);
    const refused = await firstRows(capped);
    expect(refused.rules).toContain('read-unsupported');
    expect(refused.values.every((v) => v === undefined)).toBe(true);
    const read = await firstRows(configFromValues({}).maxReaderBytes);
    expect(read.rules).toEqual([]);
    expect(read.values).toEqual(await oracle());
    // Below the bound the project file is refused with the key named.
    expect(() => parseProjectFile('/p/shardwise.json', '/p', JSON.stringify({ reading: { memoryMiB: 4 } }))).toThrow(/reading\.memoryMiB/);
  });

  it('command line: --memory-mib 16 flows through the same setting; --help lists it', async () => {
    const parsed = parseCommandLine(['check', p, '--memory-mib', '16']) as Parsed;
    expect(parsed.settings['reading.memoryMiB']).toBe(16);
    expect((await firstRows(configFromValues(parsed.settings).maxReaderBytes)).rules).toContain('read-unsupported');
    expect(() => parseCommandLine(['check', p, '--memory-mib', '8'])).toThrow(/--memory-mib/);
    expect(verbHelp('check')).toMatch(/--memory-mib N\s+memory cap per reader/);
    expect(verbHelp('head')).toMatch(/--memory-mib N/);
  });

  it('VS Code: shardwise.reading.memoryMiB is declared with the project bounds and read into the config', async () => {
    const pkg = JSON.parse(readFileSync(join(projectRoot, 'package.json'), 'utf8'));
    const declared = pkg.contributes.configuration.properties['shardwise.reading.memoryMiB'];
    const spec = settingSpec('reading.memoryMiB')!;
    expect([declared.minimum, declared.maximum, declared.scope]).toEqual([spec.min, spec.max, 'resource']);
    expect(declared.default * MIB).toBe(configFromValues({}).maxReaderBytes);
    const { settingsFor } = await import('../../../../src/host/settings.js');
    settings.set('reading.memoryMiB', 16);
    const host = await settingsFor({ path: join(dir, 'notes.parquet'), scheme: 'file', fsPath: p } as never);
    expect(host.config.maxReaderBytes).toBe(16 * MIB);
    expect((await firstRows(host.config.maxReaderBytes)).rules).toContain('read-unsupported');
    settings.set('reading.memoryMiB', 99_999); // a hand-edited settings.json: kept inside the declared bounds
    expect((await settingsFor({ path: p, scheme: 'file', fsPath: p } as never)).config.maxReaderBytes).toBe(3072 * MIB);
  });
});

describe('a forged footer length (Parquet file layout: footer length and "PAR1" in the last 8 bytes)', () => {
  /** An 8 GiB file that exists only as its two ends; every read is recorded. */
  function forgedFile(footerLen: number): { reads: Array<[number, number]>; open: () => Promise<ByteReader> } {
    const size = 8 * 1024 * MIB;
    const reads: Array<[number, number]> = [];
    const tail = new Uint8Array(8);
    new DataView(tail.buffer).setUint32(0, footerLen, true);
    tail.set([0x50, 0x41, 0x52, 0x31], 4);
    const reader: ByteReader = {
      size,
      async read(offset, length) {
        reads.push([offset, length]);
        if (offset === 0 && length <= 4) return new Uint8Array([0x50, 0x41, 0x52, 0x31]).subarray(0, length);
        if (offset === size - 8 && length === 8) return tail;
        throw new Error(`read of ${length} bytes at ${offset}: more than the two ends`);
      },
      async close() {},
    };
    return { reads, open: async () => reader };
  }

  it('a 3 GiB footer claimed by an 8 GiB file is refused by the memory cap before a byte of it is read', async () => {
    const forged = forgedFile(3 * 1024 * MIB);
    const src = new ParquetSource('/virtual/forged.parquet', { openReader: forged.open });
    const info = await src.open();
    await src.close();
    expect(info.findings.map((f) => f.rule)).toEqual(['read-limit']);
    expect(info.findings[0]!.message).toMatch(/footer declares 3\.0 GiB, over the 1\.0 GiB memory cap/);
    expect(Math.max(...forged.reads.map(([, n]) => n))).toBe(8);
  });

  it('the cap is the reader memory setting: a 10 MiB footer is refused at 8 MiB and read (and found corrupt) at 16 MiB', async () => {
    const small = forgedFile(10 * MIB);
    const refused = await new ParquetSource('/virtual/small.parquet', { openReader: small.open, maxDecodedBytes: 8 * MIB }).open();
    expect(refused.findings.map((f) => f.rule)).toEqual(['read-limit']);
    const read = forgedFile(10 * MIB);
    // The virtual file has no footer bytes to give: the read of them is tried, so the cap let it through.
    await expect(new ParquetSource('/virtual/small.parquet', { openReader: read.open, maxDecodedBytes: 16 * MIB }).open()).rejects.toThrow(/more than the two ends/);
    expect(read.reads.some(([, n]) => n === 10 * MIB)).toBe(true);
  });
});
