// `npm run demo`: opens Shardwise on demo-data/. With desktop VS Code (`code`) on PATH it uses it;
// otherwise it serves the workbench with code-server on 127.0.0.1 and keeps running until Ctrl+C.
// Options: --browser (use code-server even when `code` is on PATH), --port N.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { packageExtension } from './package.mjs';
import { run } from './workbench/ensure.mjs';
import { root } from './workbench/paths.mjs';
import { startCodeServer } from './workbench/server.mjs';

const log = (s) => console.log(`[demo] ${s}`);
const demoDir = join(root, 'demo-data');
const args = process.argv.slice(2);
const forceBrowser = args.includes('--browser');

function onPath(cmd) {
  const r = spawnSync('sh', ['-c', `command -v ${cmd}`], { encoding: 'utf8' });
  return r.status === 0 ? r.stdout.trim() : null;
}

async function ensureDemoData() {
  const hasShard = existsSync(demoDir) && readdirSync(demoDir).some((f) => /\.(jsonl|parquet|arrow|arrows)$/.test(f));
  if (hasShard) return;
  const gen = join(demoDir, 'generate.mjs');
  if (!existsSync(gen)) throw new Error('demo-data/ holds no shard and no generate.mjs to make them');
  log('generating the demo shards …');
  await run(process.execPath, [gen], { cwd: root, label: 'demo-data/generate.mjs' });
}

async function main() {
  await ensureDemoData();
  const code = forceBrowser ? null : onPath('code');
  if (code) {
    log('building the extension …');
    await run(process.execPath, [join(root, 'scripts/build.mjs')], { cwd: root, label: 'build', quiet: true });
    log(`opening demo-data/ in VS Code (${code}) with the extension loaded from this folder`);
    const child = spawn(code, [`--extensionDevelopmentPath=${root}`, demoDir], { stdio: 'inherit' });
    await new Promise((r) => child.on('close', r));
    return;
  }

  log('no `code` on PATH: serving the VS Code workbench with code-server instead');
  log('packaging the extension …');
  const vsix = await packageExtension();
  const server = await startCodeServer({ vsix, folder: demoDir, log });
  let stopping = false;
  const stop = async (why) => {
    if (stopping) return;
    stopping = true;
    log(`${why}: stopping code-server …`);
    await server.stop();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('Ctrl+C'));
  process.on('SIGTERM', () => void stop('terminated'));
  const url = `${server.url}?folder=${encodeURIComponent(demoDir)}`;
  console.log('');
  log(`Shardwise demo is running. Open this address in a browser on this machine:`);
  console.log(`\n    ${url}\n`);
  log('Click a shard in the explorer (chat-sft.jsonl is a good start) and the Shardwise icon in the activity bar.');
  log('Press Ctrl+C to stop.');
  // Keep running until a signal arrives; report if the server dies on its own.
  const timer = setInterval(async () => {
    try { await fetch(`${server.url}healthz`); } catch { clearInterval(timer); log('code-server stopped unexpectedly'); console.log(server.output()); process.exit(1); }
  }, 5000);
}

main().catch((e) => {
  console.error(`[demo] ${e.message}`);
  process.exit(1);
});
