// Builds the bundles once per test file into a temporary folder (never racing on dist/).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll } from 'vitest';

export const projectRoot = resolve(__dirname, '../../..');
export const testdata = resolve(projectRoot, '../shared/testdata');

let built: string | null = null;
const made: string[] = [];
export function buildBundles(): string {
  if (built) return built;
  const dir = mkdtempSync(join(tmpdir(), 'shardwise-build-'));
  made.push(dir);
  execFileSync(process.execPath, [join(projectRoot, 'scripts/build.mjs'), '--outdir', dir], { cwd: projectRoot, stdio: 'pipe' });
  built = dir;
  return dir;
}

// The bundles go with the test file that built them, passed or failed. (The test runner ends its
// worker processes without an 'exit' event, so a process hook would leave the folder behind.)
afterAll(() => {
  for (const dir of made.splice(0)) rmSync(dir, { recursive: true, force: true });
  built = null;
});
