// Starts code-server on 127.0.0.1 with the packaged extension installed, everything it writes kept
// in a temporary folder (HOME, XDG_*, user data, extensions), and stops its whole process group.
import { spawn } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ensureCodeServer, node24Env, run } from './ensure.mjs';

/** A port the kernel just handed out on 127.0.0.1. */
export function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

const USER_SETTINGS = {
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'workbench.enableExperiments': false,
  'telemetry.telemetryLevel': 'off',
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'extensions.ignoreRecommendations': true,
  'update.mode': 'none',
  'security.workspace.trust.enabled': false,
  'chat.disableAIFeatures': true,
  'workbench.welcomePage.walkthroughs.openOnInstall': false,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'github.gitAuthentication': false,
  'git.enabled': false,
};

async function waitForHttp(url, child, timeoutMs) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`code-server exited early (code ${child.exitCode})`);
    try {
      const res = await fetch(url);
      if (res.ok) return;
    } catch { /* not listening yet */ }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`code-server did not answer on ${url} within ${timeoutMs / 1000} s`);
}

/**
 * Starts code-server with `vsix` installed and `folder` open.
 * @param {{ vsix: string, folder: string, settings?: Record<string, unknown>, log?: (s: string) => void }} opts
 * @returns {Promise<{ url: string, port: number, workDir: string, output: () => string, collectLogs: (dest: string) => void, stop: () => Promise<void> }>}
 */
export async function startCodeServer({ vsix, folder, settings = {}, log = () => {} }) {
  const { node, entry } = await ensureCodeServer();
  const workDir = mkdtempSync(join(tmpdir(), 'shardwise-workbench-'));
  const home = join(workDir, 'home');
  const userData = join(workDir, 'user-data');
  const extensions = join(workDir, 'extensions');
  for (const d of [home, userData, extensions, join(userData, 'User'), join(home, '.config'), join(home, '.local/share'), join(home, '.cache')]) {
    mkdirSync(d, { recursive: true });
  }
  writeFileSync(join(userData, 'User', 'settings.json'), JSON.stringify({ ...USER_SETTINGS, ...settings }, null, 2));
  const port = await freePort();
  const config = join(workDir, 'config.yaml');
  writeFileSync(config, `bind-addr: 127.0.0.1:${port}\nauth: none\ncert: false\n`);
  const env = node24Env({
    HOME: home,
    XDG_CONFIG_HOME: join(home, '.config'),
    XDG_DATA_HOME: join(home, '.local/share'),
    XDG_CACHE_HOME: join(home, '.cache'),
    XDG_RUNTIME_DIR: workDir,
    // The Node the extension host runs on must not inherit our test runner's options.
    NODE_OPTIONS: '',
    VSCODE_IPC_HOOK_CLI: '',
  });
  const common = ['--config', config, '--user-data-dir', userData, '--extensions-dir', extensions];

  log(`installing ${vsix} into a fresh extensions folder`);
  await run(node, [entry, ...common, '--install-extension', vsix], { env, label: 'code-server --install-extension', quiet: true });

  const args = [
    entry, ...common,
    '--bind-addr', `127.0.0.1:${port}`,
    '--auth', 'none',
    '--disable-telemetry', '--disable-update-check', '--disable-workspace-trust',
    '--disable-getting-started-override',
    '--ignore-last-opened',
    folder,
  ];
  const child = spawn(node, args, { env, detached: true, stdio: ['ignore', 'pipe', 'pipe'] });
  let output = '';
  const keep = (b) => { output = (output + b.toString()).slice(-20000); };
  child.stdout.on('data', keep);
  child.stderr.on('data', keep);

  let stopped = false;
  const stop = async () => {
    if (stopped) return;
    stopped = true;
    const exited = new Promise((r) => (child.exitCode !== null ? r() : child.once('exit', r)));
    try { process.kill(-child.pid, 'SIGTERM'); } catch { /* already gone */ }
    const t = setTimeout(() => { try { process.kill(-child.pid, 'SIGKILL'); } catch { /* gone */ } }, 5000);
    await exited;
    clearTimeout(t);
    // Children of the group (extension host, file watcher) may outlive the leader briefly.
    try { process.kill(-child.pid, 'SIGKILL'); } catch { /* all gone */ }
    rmSync(workDir, { recursive: true, force: true });
  };

  const url = `http://127.0.0.1:${port}/`;
  try {
    await waitForHttp(`${url}healthz`, child, 60000);
  } catch (e) {
    await stop();
    throw new Error(`${e.message}\n--- code-server output ---\n${output}`);
  }
  /** Copies the server's logs (extension host included) to `dest`, for reading after a failure. */
  const collectLogs = (dest) => {
    const logs = join(userData, 'logs');
    if (existsSync(logs)) cpSync(logs, dest, { recursive: true });
    writeFileSync(join(dest, 'code-server-output.txt'), output);
  };
  return { url, port, workDir, output: () => output, collectLogs, stop };
}
