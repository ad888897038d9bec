// Installs, once, what the workbench needs beside the repository: a Node 24 binary (from the npm
// registry) and code-server under it, both cached in .cache/ so later runs start at once.
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import {
  CODE_SERVER_VERSION, NODE24_SPEC, codeServerDir, node24Bin, node24Dir,
} from './paths.mjs';

const log = (msg) => console.log(`[workbench] ${msg}`);

/** Runs a command, streams a short progress line every few seconds, rejects with its output tail. */
export function run(cmd, args, { cwd, env, label = cmd, quiet = false } = {}) {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd, env: env ?? process.env, stdio: ['ignore', 'pipe', 'pipe'] });
    let tail = '';
    let lines = 0;
    const started = Date.now();
    const keep = (b) => {
      const s = b.toString();
      tail = (tail + s).slice(-6000);
      lines += s.split('\n').length - 1;
    };
    child.stdout.on('data', keep);
    child.stderr.on('data', keep);
    const timer = quiet ? undefined : setInterval(() => {
      log(`${label}: ${Math.round((Date.now() - started) / 1000)} s, ${lines} lines of output so far`);
    }, 15000);
    child.on('error', (e) => { clearInterval(timer); reject(new Error(`${label}: could not start ${cmd}: ${e.message}`)); });
    child.on('close', (code, signal) => {
      clearInterval(timer);
      if (code === 0) resolve(tail);
      else reject(new Error(`${label} failed (${signal ?? `exit ${code}`}). Last output:\n${tail}`));
    });
  });
}

/** Path of the cached Node 24 executable, fetched with `npm pack` on first use. */
export async function ensureNode24() {
  const node = join(node24Bin, 'node');
  if (existsSync(node)) return node;
  log(`fetching ${NODE24_SPEC} from the npm registry (code-server needs Node 24) …`);
  mkdirSync(node24Dir, { recursive: true });
  await run('npm', ['pack', NODE24_SPEC, '--silent'], { cwd: node24Dir, label: 'npm pack' });
  const tgz = readdirSync(node24Dir).find((f) => f.endsWith('.tgz'));
  if (!tgz) throw new Error(`npm pack ${NODE24_SPEC} produced no archive in ${node24Dir}`);
  await run('tar', ['xzf', tgz], { cwd: node24Dir, label: 'untar node' });
  rmSync(join(node24Dir, tgz));
  if (!existsSync(node)) throw new Error(`${NODE24_SPEC} did not contain bin/node`);
  log(`Node 24 ready at ${node}`);
  return node;
}

/** Environment with Node 24 first on PATH, for the code-server install and the server only. */
export function node24Env(extra = {}) {
  // Under `npm test` the outer npm leaves npm_config_* variables (user agent "node/v20" among them)
  // that an inner npm would take as its own config: code-server's install reads that user agent.
  const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !/^npm_/i.test(k)));
  return { ...env, PATH: `${node24Bin}:${process.env.PATH}`, ...extra };
}

const marker = join(codeServerDir, '.shardwise-installed');
export const codeServerEntry = join(codeServerDir, 'node_modules', 'code-server', 'out', 'node', 'entry.js');

/** Installs code-server into .cache/code-server (3–4 minutes the first time). Returns its entry script. */
export async function ensureCodeServer() {
  const node = await ensureNode24();
  if (existsSync(marker) && readFileSync(marker, 'utf8').trim() === CODE_SERVER_VERSION && existsSync(codeServerEntry)) {
    return { node, entry: codeServerEntry };
  }
  // code-server's native kerberos module compiles against Debian's libkrb5-dev.
  if (!existsSync('/usr/include/gssapi/gssapi.h') && !existsSync('/usr/include/krb5.h')) {
    throw new Error('code-server needs the Kerberos headers to build: run `apt-get install -y libkrb5-dev` first.');
  }
  log(`installing code-server ${CODE_SERVER_VERSION} into .cache/code-server (first run only, about 3–4 minutes, ~620 MB) …`);
  mkdirSync(codeServerDir, { recursive: true });
  const pkg = join(codeServerDir, 'package.json');
  if (!existsSync(pkg)) writeFileSync(pkg, JSON.stringify({ name: 'shardwise-code-server-cache', private: true }, null, 2));
  // Native modules must compile against Node 24's headers, whatever nodedir the npm config names.
  const env = node24Env({ npm_config_nodedir: join(node24Dir, 'package') });
  await run('npm', ['install', '--no-audit', '--no-fund', '--loglevel=http', `code-server@${CODE_SERVER_VERSION}`], {
    cwd: codeServerDir, env, label: 'npm install code-server',
  });
  if (!existsSync(codeServerEntry)) throw new Error(`code-server installed but ${codeServerEntry} is missing`);
  writeFileSync(marker, CODE_SERVER_VERSION);
  log('code-server installed');
  return { node, entry: codeServerEntry };
}

/** Debian's Chromium, which the workbench tests drive; it is never downloaded by us. */
export function chromiumPath() {
  for (const p of ['/usr/bin/chromium', '/usr/bin/chromium-browser']) if (existsSync(p)) return p;
  throw new Error('Chromium is missing: run `apt-get install -y chromium` (the tests never download a browser).');
}
