// Builds the bundles once per test file into a temporary folder (never racing on dist/).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';

export const projectRoot = resolve(__dirname, '../../..');
export const testdata = resolve(projectRoot, '../shared/testdata');

let built: string | null = null;
export function buildBundles(): string {
  if (built) return built;
  const dir = mkdtempSync(join(tmpdir(), 'shardwise-build-'));
  execFileSync(process.execPath, [join(projectRoot, 'scripts/build.mjs'), '--outdir', dir], { cwd: projectRoot, stdio: 'pipe' });
  built = dir;
  // The bundles go with the test process that built them.
  process.once('exit', () => rmSync(dir, { recursive: true, force: true }));
  return dir;
}
