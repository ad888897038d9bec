// A code-server whose folder opens in Restricted Mode: workspace trust on (the main run turns it
// off), no start-up prompt, and no folder trusted yet. Everything it writes stays in a temporary
// folder; `stop` ends its whole process group.
import { spawn } from 'node:child_process';
import { existsSync, cpSync, mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ensureCodeServer, node24Env, run } from '../../scripts/workbench/ensure.mjs';
import { freePort } from '../../scripts/workbench/server.mjs';

// VS Code's workspace trust settings (code.visualstudio.com/docs/editing/workspaces/workspace-trust):
// trust enabled, the folder not trusted and no prompt asking, files from outside opened as well.
const USER_SETTINGS = {
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'telemetry.telemetryLevel': 'off',
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'update.mode': 'none',
  'security.workspace.trust.enabled': true,
  'security.workspace.trust.startupPrompt': 'never',
  'security.workspace.trust.banner': 'always',
  'security.workspace.trust.untrustedFiles': 'open',
  'security.workspace.trust.emptyWindow': false,
  'chat.disableAIFeatures': true,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'git.enabled': false,
};

export async function startUntrustedCodeServer({ vsix, folder, log = () => {} }) {
  const { node, entry } = await ensureCodeServer();
  const workDir = mkdtempSync(join(tmpdir(), 'shardwise-untrusted-'));
  const home = join(workDir, 'home');
  const userData = join(workDir, 'user-data');
  const extensions = join(workDir, 'extensions');
  for (const d of [home, userData, extensions, join(userData, 'User'), join(home, '.config'), join(home, '.local/share'), join(home, '.cache')]) mkdirSync(d, { recursive: true });
  writeFileSync(join(userData, 'User', 'settings.json'), JSON.stringify(USER_SETTINGS, null, 2));
  const port = await freePort();
  const config = join(workDir, 'config.yaml');
  writeFileSync(config, `bind-addr: 127.0.0.1:${port}\nauth: none\ncert: false\n`);
  const env = node24Env({
    HOME: home, XDG_CONFIG_HOME: join(home, '.config'), XDG_DATA_HOME: join(home, '.local/share'), XDG_CACHE_HOME: join(home, '.cache'),
    XDG_RUNTIME_DIR: workDir, NODE_OPTIONS: '', VSCODE_IPC_HOOK_CLI: '',
  });
  const common = ['--config', config, '--user-data-dir', userData, '--extensions-dir', extensions];
  log(`installing ${vsix} for the Restricted Mode run`);
  await run(node, [entry, ...common, '--install-extension', vsix], { env, label: 'code-server --install-extension', quiet: true }).catch((e) => {
    rmSync(workDir, { recursive: true, force: true });
    throw e;
  });
  // No --disable-workspace-trust here: that flag is what the main run uses to skip trust.
  const args = [entry, ...common, '--bind-addr', `127.0.0.1:${port}`, '--auth', 'none', '--disable-telemetry', '--disable-update-check', '--disable-getting-started-override', '--ignore-last-opened', folder];
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
    try { process.kill(-child.pid, 'SIGKILL'); } catch { /* all gone */ }
    rmSync(workDir, { recursive: true, force: true });
  };
  const url = `http://127.0.0.1:${port}/`;
  const deadline = Date.now() + 60000;
  for (;;) {
    if (child.exitCode !== null) { await stop(); throw new Error(`code-server exited early (code ${child.exitCode})\n${output}`); }
    try { if ((await fetch(`${url}healthz`)).ok) break; } catch { /* not yet */ }
    if (Date.now() > deadline) { await stop(); throw new Error(`code-server did not answer within 60 s\n${output}`); }
    await new Promise((r) => setTimeout(r, 250));
  }
  const collectLogs = (dest) => {
    const logs = join(userData, 'logs');
    if (existsSync(logs)) cpSync(logs, dest, { recursive: true });
    writeFileSync(join(dest, 'code-server-output.txt'), output);
  };
  return { url, stop, collectLogs };
}
