// Runs the official JSON Schema Test Suite (json-schema-org/JSON-Schema-Test-Suite, MIT; see
// ../shared/testdata/SOURCES.md) through compileSchema, the same layer schemaCheck validates records with.
// Every case that fails must be listed in schema-known-failures.txt, and every listed case must still fail.

import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { compileSchema } from '../../../../src/engine/checks/schema.js';

const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../..');
const suiteRoot = path.resolve(projectRoot, '../shared/testdata/json-schema');
const knownFailuresFile = path.join(path.dirname(fileURLToPath(import.meta.url)), 'schema-known-failures.txt');

interface SuiteCase { description: string; data: unknown; valid: boolean }
interface SuiteGroup { description: string; schema: unknown; tests: SuiteCase[] }

function walk(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = path.join(dir, name);
    return statSync(full).isDirectory() ? walk(full) : [full];
  });
}

/** The suite's remotes, served by URI as its README asks: the shared root files plus this draft's own folder. */
function remotesFor(draftFolder: string): Map<string, unknown> {
  const remotesDir = path.join(suiteRoot, 'remotes');
  const remotes = new Map<string, unknown>();
  for (const file of walk(remotesDir)) {
    const rel = path.relative(remotesDir, file).split(path.sep).join('/');
    const top = rel.split('/')[0];
    const isDraftFolder = /^(draft\d|draft20|v1$)/.test(top) && rel.includes('/');
    if (isDraftFolder && top !== draftFolder) continue;
    remotes.set(`http://localhost:1234/${rel}`, JSON.parse(readFileSync(file, 'utf8')));
  }
  return remotes;
}

function readKnownFailures(): Set<string> {
  const text = readFileSync(knownFailuresFile, 'utf8');
  return new Set(
    text
      .split('\n')
      .map((l) => l.trim())
      .filter((l) => l !== '' && !l.startsWith('#')),
  );
}

interface SuiteResult { total: number; failed: string[] }

function runDraft(draftFolder: string): SuiteResult {
  const dir = path.join(suiteRoot, draftFolder);
  const remotes = remotesFor(draftFolder);
  // The draft-7 files name no $schema: the folder says which draft they are.
  const defaultDraft = draftFolder === 'draft7' ? 'draft-07' : '2020-12';
  const failed: string[] = [];
  let total = 0;
  // Required tests only: the optional/ subfolder is left out on purpose.
  const files = readdirSync(dir).filter((f) => f.endsWith('.json')).sort();
  for (const file of files) {
    const groups = JSON.parse(readFileSync(path.join(dir, file), 'utf8')) as SuiteGroup[];
    for (const group of groups) {
      let validate: ((v: unknown) => unknown[]) | null = null;
      try {
        validate = compileSchema(group.schema, `${draftFolder}/${file}`, { remotes, defaultDraft });
      } catch {
        validate = null;
      }
      for (const test of group.tests) {
        total++;
        const name = `${draftFolder}/${file} :: ${group.description} :: ${test.description}`;
        const valid = validate === null ? null : validate(test.data).length === 0;
        if (valid !== test.valid) failed.push(name);
      }
    }
  }
  return { total, failed };
}

describe('JSON Schema Test Suite through compileSchema', () => {
  it('finds the suite folder (a missing folder is a failure, not a skip)', () => {
    expect(existsSync(path.join(suiteRoot, 'draft2020-12')), `missing ${suiteRoot}`).toBe(true);
    expect(existsSync(path.join(suiteRoot, 'draft7')), `missing ${suiteRoot}`).toBe(true);
    // A line naming no draft folder could never be checked, so it is not allowed in the list.
    const stray = [...readKnownFailures()].filter((n) => !/^(draft2020-12|draft7)\/[^ ]+\.json :: .+ :: .+$/.test(n));
    expect(stray, 'known-failure lines must read "<draft>/<file> :: <group> :: <test>"').toEqual([]);
  });

  for (const draft of ['draft2020-12', 'draft7']) {
    it(`${draft}: every failing case is a listed known failure, and every listed one still fails`, () => {
      const known = readKnownFailures();
      const { total, failed } = runDraft(draft);
      const passRate = ((100 * (total - failed.length)) / total).toFixed(2);
      console.log(`JSON Schema Test Suite ${draft}: ${total - failed.length}/${total} passed (${passRate}%)`);
      // A healthy run holds hundreds of cases; an empty count would mean the suite was not read.
      expect(total).toBeGreaterThan(500);
      const unexpected = failed.filter((n) => !known.has(n));
      const failedSet = new Set(failed);
      const nowPassing = [...known].filter((n) => n.startsWith(`${draft}/`) && !failedSet.has(n));
      expect(unexpected, 'new failures (fix them, or list them in schema-known-failures.txt with a reason)').toEqual([]);
      expect(nowPassing, 'now passing: remove from known failures').toEqual([]);
    });
  }
});
