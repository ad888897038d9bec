// Bundles the extension host, the CLI, the analysis worker and the two webviews with esbuild,
// and copies what the bundles load at run time (parquet-wasm's .wasm, codicons) beside them.
import { build } from 'esbuild';
import { cpSync, existsSync, mkdirSync, rmSync, chmodSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');

// An import across the rooms' walls fails the build (scripts/rooms.mjs).
const { wallBreaks } = await import('./rooms.mjs');
const breaks = wallBreaks();
if (breaks.length) {
  console.error(`Imports across the rooms' walls (see DEVELOPERS.md):\n  ${breaks.join('\n  ')}`);
  process.exit(1);
}
const outArg = process.argv.indexOf('--outdir');
// Tests build into a folder of their own so parallel runs never race on dist/.
const dist = outArg > 0 ? process.argv[outArg + 1] : join(root, 'dist');
const production = process.argv.includes('--production');

rmSync(dist, { recursive: true, force: true });
mkdirSync(dist, { recursive: true });

const common = {
  bundle: true,
  sourcemap: !production,
  minify: production,
  logLevel: 'warning',
  target: 'node20',
};

const nodeEntries = [
  { in: 'src/host/extension.ts', out: 'extension' },
  { in: 'src/cli/bin.ts', out: 'cli' },
  { in: 'src/node/worker.ts', out: 'worker' },
].filter((e) => existsSync(join(root, e.in)));

// The encodings' rank tables (3.3 MB of source) are files of their own beside the bundles, loaded on
// first use: a worker that never counts tokens does not parse them, and every worker starts faster.
const RANKS = ['cl100k_base', 'o200k_base'];
const ranksBeside = {
  name: 'ranks-beside',
  setup(b) {
    b.onResolve({ filter: /^js-tiktoken\/ranks\// }, (a) => (a.kind === 'entry-point' ? undefined : { path: `./ranks/${a.path.split('/').pop()}.js`, external: true }));
  },
};

await build({
  ...common,
  entryPoints: nodeEntries.map((e) => ({ in: join(root, e.in), out: e.out })),
  outdir: dist,
  platform: 'node',
  format: 'cjs',
  external: ['vscode'],
  plugins: [ranksBeside],
  // parquet-wasm's node build loads its .wasm from beside the bundle.
  loader: { '.wasm': 'file' },
});
for (const n of RANKS) {
  await build({
    ...common,
    sourcemap: false,
    // module.exports is the table itself, so `(await import(...)).default` is the table in the bundles.
    stdin: { contents: `const m = require('js-tiktoken/ranks/${n}'); module.exports = m.default ?? m;`, resolveDir: root, loader: 'js' },
    outfile: join(dist, 'ranks', `${n}.js`),
    platform: 'node',
    format: 'cjs',
  });
}
if (existsSync(join(dist, 'cli.js'))) {
  const { readFileSync, writeFileSync } = await import('node:fs');
  const p = join(dist, 'cli.js');
  const src = readFileSync(p, 'utf8');
  if (!src.startsWith('#!')) writeFileSync(p, `#!/usr/bin/env node\n${src}`);
  chmodSync(p, 0o755);
}

const webEntries = [
  { in: 'src/webview/recordView.ts', out: 'recordView' },
  { in: 'src/webview/panel.ts', out: 'panel' },
].filter((e) => existsSync(join(root, e.in)));
if (webEntries.length) {
  await build({
    ...common,
    target: 'chrome114',
    entryPoints: webEntries.map((e) => ({ in: join(root, e.in), out: e.out })),
    outdir: join(dist, 'webview'),
    platform: 'browser',
    format: 'iife',
  });
}

// Run-time files the bundles load.
const wasmSrc = join(root, 'node_modules/parquet-wasm/node/parquet_wasm_bg.wasm');
if (existsSync(wasmSrc)) cpSync(wasmSrc, join(dist, 'parquet_wasm_bg.wasm'));
const codicons = join(root, 'node_modules/@vscode/codicons/dist');
mkdirSync(join(dist, 'codicons'), { recursive: true });
cpSync(join(codicons, 'codicon.css'), join(dist, 'codicons/codicon.css'));
cpSync(join(codicons, 'codicon.ttf'), join(dist, 'codicons/codicon.ttf'));
console.log(`built ${nodeEntries.length + webEntries.length} bundles into dist/`);
