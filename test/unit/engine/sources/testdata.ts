// Where the golden test files live: ../shared/testdata beside the project, read in place.
import { existsSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), '../../../..');
export const testdata = resolve(projectRoot, '../shared/testdata');

/** Fails (never skips) when the golden files are missing. */
export function requireTestdata(sub: string): string {
  const p = resolve(testdata, sub);
  if (!existsSync(p)) throw new Error(`golden test data missing: ${p} (see ../shared/testdata/SOURCES.md)`);
  return p;
}
