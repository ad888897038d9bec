// `npm run package`: production bundle with esbuild, then a .vsix with @vscode/vsce (offline), then
// checks that the package holds no dev files and that every bundled package has its notice.
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { run } from './workbench/ensure.mjs';
import { bundledPackages, listedPackages } from './workbench/notices.mjs';
import { root, vsixPath } from './workbench/paths.mjs';

const vsce = join(root, 'node_modules', '.bin', 'vsce');
const log = (s) => console.log(`[package] ${s}`);

// Paths that must never ship: sources, tests, dependencies, demo data, source maps, caches.
const FORBIDDEN = [/^src\//, /^test\//, /^node_modules\//, /^demo-data\//, /^scripts\//, /\.map$/, /^\.cache\//, /^test-output\//, /\.ts$/, /^\.ci\//];

/** Builds the .vsix and returns its path. */
export async function packageExtension() {
  for (const f of ['README.md', 'CHANGELOG.md', 'LICENSE', 'THIRD_PARTY_NOTICES.md', 'media/icon.png']) {
    if (!existsSync(join(root, f))) throw new Error(`cannot package: ${f} is missing`);
  }

  // A development build first: its source maps tell which packages end up inside the bundles.
  log('development build (to list bundled packages) …');
  await run(process.execPath, [join(root, 'scripts/build.mjs')], { cwd: root, label: 'build', quiet: true });
  const bundled = bundledPackages(join(root, 'dist'));
  const listed = new Set(listedPackages());
  const missing = bundled.filter((p) => !listed.has(p));
  const stale = [...listed].filter((p) => !bundled.includes(p));
  if (missing.length || stale.length) {
    throw new Error('THIRD_PARTY_NOTICES.md does not match the bundles' +
      (missing.length ? `; lacks: ${missing.join(', ')}` : '') + (stale.length ? `; lists unbundled: ${stale.join(', ')}` : '') +
      '. Regenerate it with `node scripts/workbench/notices.mjs` and review the result.');
  }
  log(`bundled packages, all with notices: ${bundled.join(', ')}`);

  log('production build …');
  await run(process.execPath, [join(root, 'scripts/build.mjs'), '--production'], { cwd: root, label: 'build --production', quiet: true });
  if (!existsSync(join(root, 'dist', 'extension.js'))) throw new Error('build produced no dist/extension.js');

  const files = (await run(process.execPath, [vsce, 'ls', '--no-dependencies'], { cwd: root, label: 'vsce ls', quiet: true }))
    .split('\n').map((s) => s.trim()).filter(Boolean);
  const bad = files.filter((f) => FORBIDDEN.some((re) => re.test(f)));
  if (bad.length) throw new Error(`the package would ship dev files: ${bad.join(', ')} — fix .vscodeignore`);
  for (const need of ['package.json', 'README.md', 'CHANGELOG.md', 'LICENSE', 'THIRD_PARTY_NOTICES.md', 'media/icon.png', 'dist/extension.js', 'dist/worker.js', 'dist/parquet_wasm_bg.wasm', 'dist/webview/recordView.js', 'dist/webview/panel.js']) {
    if (!files.includes(need)) throw new Error(`the package would lack ${need}`);
  }
  log(`${files.length} files in the package`);

  await run(process.execPath, [vsce, 'package', '--no-dependencies', '--out', vsixPath], { cwd: root, label: 'vsce package', quiet: true });
  const kb = Math.round(statSync(vsixPath).size / 1024);
  log(`wrote ${relative(root, vsixPath)} (${kb} KiB)`);
  return vsixPath;
}

/** The .vsix to test: one named by SHARDWISE_VSIX (built earlier in the same run) or a fresh one. */
export async function vsixForRun() {
  const given = process.env.SHARDWISE_VSIX;
  if (given) {
    if (!existsSync(given)) throw new Error(`SHARDWISE_VSIX=${given} does not exist`);
    return given;
  }
  return packageExtension();
}

if (import.meta.url === `file://${process.argv[1]}`) {
  try {
    const out = await packageExtension();
    const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
    console.log(`${manifest.publisher}.${manifest.name}@${manifest.version} → ${out}`);
  } catch (e) {
    console.error(`[package] ${e.message}`);
    process.exit(1);
  }
}
