// Optional desktop harness for machines that may download VS Code (@vscode/test-electron fetches
// it on first use). The gate is test/workbench/run.mjs, which needs no download; this one is not run in CI.
// Usage: node test/workbench/electron/run.mjs [--version 1.74.0]
import { runTests } from '@vscode/test-electron';
import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { root } from '../../../scripts/workbench/paths.mjs';
import { run } from '../../../scripts/workbench/ensure.mjs';

const i = process.argv.indexOf('--version');
const version = i > 0 ? process.argv[i + 1] : undefined;
await run(process.execPath, [join(root, 'scripts/build.mjs')], { cwd: root, label: 'build', quiet: true });
const work = mkdtempSync(join(tmpdir(), 'shardwise-electron-'));
cpSync(join(root, 'demo-data'), join(work, 'demo-data'), { recursive: true });
try {
  await runTests({
    version,
    extensionDevelopmentPath: root,
    extensionTestsPath: join(root, 'test/workbench/electron/suite.cjs'),
    launchArgs: [join(work, 'demo-data'), '--disable-extensions', '--disable-workspace-trust', `--user-data-dir=${join(work, 'user')}`],
  });
  console.log('1 passed, 0 failed');
} catch (e) {
  console.error(e.message ?? e);
  console.log('0 passed, 1 failed');
  process.exitCode = 1;
} finally {
  rmSync(work, { recursive: true, force: true });
}
