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
