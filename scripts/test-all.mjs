// `npm test`: builds, then runs every layer — engine unit tests and outside checks (vitest), the
// webviews in headless Chromium, and the extension inside a real VS Code workbench — and ends
// with one line "N passed, M failed".
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const out = join(root, 'test-output');
mkdirSync(out, { recursive: true });
const only = process.argv.slice(2); // e.g. `npm test -- unit webview`
const want = (layer) => only.length === 0 || only.includes(layer);

const testdata = resolve(root, '../shared/testdata');
if (!existsSync(join(testdata, 'SOURCES.md'))) {
  console.error(`The golden test files are missing: expected ${testdata} (see DEVELOPERS.md). Refusing to run without them.`);
  process.exit(1);
}

function run(cmd, args, opts = {}) {
  console.log(`\n▶ ${cmd} ${args.join(' ')}`);
  if (!opts.capture) return spawnSync(cmd, args, { cwd: root, stdio: 'inherit', env: process.env });
  // Stream the output as it comes (a cold workbench install takes minutes) and keep it to read counts.
  return new Promise((resolveRun) => {
    const child = spawn(cmd, args, { cwd: root, stdio: ['ignore', 'pipe', 'inherit'], env: process.env });
    let stdout = '';
    child.stdout.setEncoding('utf8');
    child.stdout.on('data', (d) => {
      stdout += d;
      process.stdout.write(d);
    });
    child.on('close', (status) => resolveRun({ status, stdout }));
  });
}

import { ensureSystemPackages } from './ensure-system.mjs';
if ((want('unit') || want('webview') || want('workbench')) && !ensureSystemPackages()) process.exit(1);

const layers = [];
let passed = 0;
let failed = 0;

const b = run(process.execPath, ['scripts/build.mjs']);
if (b.status !== 0) {
  console.log('\nbuild failed');
  console.log('0 passed, 1 failed');
  process.exit(1);
}

if (want('types')) {
  // Every room type-checks as its own project (an import or a library across a wall fails), then the tests.
  const rooms = run(process.execPath, ['node_modules/typescript/bin/tsc', '-b']);
  const tests = run(process.execPath, ['node_modules/typescript/bin/tsc', '-p', 'test/tsconfig.json']);
  // The webview tests' scripted host (plain JavaScript) is checked against src/protocol.ts.
  const fixtures = run(process.execPath, ['node_modules/typescript/bin/tsc', '-p', 'test/webview/tsconfig.json']);
  const ok = [rooms, tests, fixtures].filter((r) => r.status === 0).length;
  layers.push(['types (each room its own TypeScript project, the tests, the webview fixtures against the protocol)', ok, 3 - ok]);
}

if (want('unit')) {
  const jsonOut = join(out, 'vitest.json');
  const r = run(process.execPath, ['node_modules/vitest/vitest.mjs', 'run', '--reporter=default', '--reporter=json', `--outputFile=${jsonOut}`]);
  let p = 0;
  let f = r.status === 0 ? 0 : 1;
  try {
    const j = JSON.parse(readFileSync(jsonOut, 'utf8'));
    p = j.numPassedTests;
    f = j.numFailedTests + (r.status !== 0 && j.numFailedTests === 0 ? 1 : 0);
  } catch {
    // No report: the run itself failed; counted as one failure above.
  }
  layers.push(['unit and outside checks (vitest)', p, f]);
}

async function nodeTestLayer(name, dir) {
  if (!existsSync(join(root, dir))) return;
  const files = readdirTests(join(root, dir));
  if (!files.length) return;
  const r = await run(process.execPath, ['--test', '--test-concurrency=1', '--test-reporter=tap', ...files], { capture: true });
  const p = Number(/^# pass (\d+)/m.exec(r.stdout ?? '')?.[1] ?? 0);
  let f = Number(/^# fail (\d+)/m.exec(r.stdout ?? '')?.[1] ?? 0);
  if (r.status !== 0 && f === 0) f = 1;
  layers.push([name, p, f]);
}

import { readdirSync } from 'node:fs';
function readdirTests(dir) {
  return readdirSync(dir)
    .filter((f) => f.endsWith('.test.mjs'))
    .map((f) => join(dir, f));
}

if (want('webview')) await nodeTestLayer('webviews in Chromium', 'test/webview');

if (want('workbench') && existsSync(join(root, 'test/workbench/run.mjs'))) {
  const r = await run(process.execPath, ['test/workbench/run.mjs'], { capture: true });
  const m = [...(r.stdout ?? '').matchAll(/^(\d+) passed, (\d+) failed/gm)].pop();
  const p = Number(m?.[1] ?? 0);
  let f = Number(m?.[2] ?? 0);
  if (r.status !== 0 && f === 0) f = 1;
  layers.push(['extension in the VS Code workbench', p, f]);
}

console.log('\nSummary');
for (const [name, p, f] of layers) {
  console.log(`  ${name}: ${p} passed, ${f} failed`);
  passed += p;
  failed += f;
}
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed > 0 || passed === 0 ? 1 : 0);
