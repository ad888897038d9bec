// Bundling smoke test: the Parquet source bundled by esbuild to CommonJS (as scripts/build.mjs
// does) loads parquet-wasm from the .wasm copied beside the bundle, with no node_modules in reach.

import { describe, expect, it } from 'vitest';
import { build } from 'esbuild';
import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { projectRoot, requireTestdata } from './testdata.js';

describe('parquet-wasm inside a CommonJS bundle', () => {
  it('reads alltypes_plain.parquet (ids 4,5,6,7,2,3,0,1 per SOURCES.md) from dist-like layout', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shardwise-bundle-'));
    try {
      const entry = join(dir, 'entry.ts');
      writeFileSync(
        entry,
        `import { ParquetSource, wasmMemoryBytes } from ${JSON.stringify(join(projectRoot, 'src/engine/sources/parquet.ts'))};
         (async () => { const s = new ParquetSource(process.argv[2]); const info = await s.open();
           const rows = await s.read(0, info.entries); await s.close();
           console.log(JSON.stringify({ ids: rows.map((r) => r.value.id), wasm: wasmMemoryBytes() > 0 })); })();`,
      );
      await build({ entryPoints: [entry], bundle: true, platform: 'node', format: 'cjs', outfile: join(dir, 'dist/worker.js'), logLevel: 'error', absWorkingDir: projectRoot });
      copyFileSync(join(projectRoot, 'node_modules/parquet-wasm/node/parquet_wasm_bg.wasm'), join(dir, 'dist/parquet_wasm_bg.wasm'));
      const out = execFileSync(process.execPath, [join(dir, 'dist/worker.js'), join(requireTestdata('parquet'), 'alltypes_plain.parquet')], { cwd: dir, encoding: 'utf8' });
      expect(JSON.parse(out)).toEqual({ ids: [4, 5, 6, 7, 2, 3, 0, 1], wasm: true });
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
