// Arrow IPC file and stream sources against apache/arrow-testing's integration gold files
// (../shared/testdata/arrow, SOURCES.md: arrow-testing data/arrow-ipc-stream, commit 9cfebfef):
// each X.arrow_file and X.stream must equal X.json.gz (Arrow integration JSON format, arrow-testing
// gold files; read by ./arrowGold.ts) value by value, for every type the files hold, or the case is
// listed in arrow.known-failures.json with the reason and the problem it still shows.

import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { gunzipSync } from 'node:zlib';
import { join } from 'node:path';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile.js';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream.js';
import type { Entry, SourceInfo } from '../../../../src/engine/sources/source.js';
import { requireTestdata } from './testdata.js';
import { expecter, goldDictionaries, parseGold, type JDoc } from './arrowGold.js';

interface KnownCase {
  /** Why our sources cannot give the gold values. */
  why: string;
  /** Text the case's problem still contains: a listed case must keep failing this way. */
  fails: string;
}
const known = JSON.parse(readFileSync(new URL('./arrow.known-failures.json', import.meta.url), 'utf8')) as { cases: Record<string, KnownCase> };

async function readAll(path: string): Promise<{ info: SourceInfo; rows: Entry[] }> {
  const s = path.endsWith('.stream') ? new ArrowStreamSource(path) : new ArrowFileSource(path);
  try {
    await s.open();
    const info = await s.index();
    return { info, rows: await s.read(0, info.entries) };
  } finally {
    await s.close();
  }
}

/** Returns a problem description, or null when the source's rows equal the gold JSON. */
async function compare(path: string, doc: JDoc): Promise<string | null> {
  const { info, rows } = await readAll(path);
  const errors = [...info.findings, ...rows.flatMap((r) => r.findings)].filter((f) => f.severity === 'error');
  if (errors.length) return `finding: ${errors[0].rule}: ${errors[0].message}`;
  const names = (info.columns ?? []).map((c) => c.name);
  const expectNames = doc.schema.fields.map((f) => f.name);
  if (JSON.stringify(names) !== JSON.stringify(expectNames)) return `field names ${names} != ${expectNames}`;
  const counts = (info.groups ?? []).map((g) => g.rows);
  if (JSON.stringify(counts) !== JSON.stringify(doc.batches.map((b) => b.count))) return `batch rows ${counts}`;
  const total = doc.batches.reduce((n, b) => n + b.count, 0);
  if (rows.length !== total) return `${rows.length} rows, the gold file has ${total}`;
  if (new Set(expectNames).size !== expectNames.length) return `columns share a name (${expectNames.join(', ')}); a row as a JSON object cannot hold them all`;
  const dicts = goldDictionaries(doc);
  let row = 0;
  for (const batch of doc.batches) {
    const checks = batch.columns.map((col, c) => expecter(doc.schema.fields[c], col, dicts));
    for (let r = 0; r < batch.count; r++, row++) {
      const value = rows[row].value as Record<string, unknown>;
      if (Object.keys(value).join('\u0000') !== expectNames.join('\u0000')) return `row ${row} has members ${Object.keys(value)}`;
      doc.schema.fields.forEach((field, c) => checks[c](value[field.name], r, `row ${row} /${field.name}`));
    }
  }
  return null;
}

async function problemOf(path: string, gold: string): Promise<string | null> {
  const doc = parseGold(gunzipSync(readFileSync(gold)).toString('utf8'));
  try {
    return await compare(path, doc);
  } catch (e) {
    return (e as Error).message || String(e);
  }
}

const root = requireTestdata('arrow/ipc-stream/integration');
const versions = readdirSync(root).filter((v) => statSync(join(root, v)).isDirectory() && !v.includes('bigendian'));
const cases = versions.flatMap((v) =>
  readdirSync(join(root, v))
    .filter((n) => n.endsWith('.json.gz'))
    .flatMap((f) => ['arrow_file', 'stream'].map((ext) => ({ v, base: f.slice(0, -'.json.gz'.length), ext }))),
);

describe('Arrow integration gold files (arrow-testing, little-endian folders)', () => {
  for (const { v, base, ext } of cases) {
    const id = `${v}/${base}.${ext}`;
    it(id, async () => {
      const problem = await problemOf(join(root, v, `${base}.${ext}`), join(root, v, `${base}.json.gz`));
      const listed = known.cases[id];
      if (!listed) {
        expect(problem).toBeNull();
        return;
      }
      // A listed case checks itself: it still fails, with a message, and in the way the list says.
      expect(problem, `${id} now equals its gold file: remove it from arrow.known-failures.json`).not.toBeNull();
      expect(problem!.length).toBeGreaterThan(0);
      expect(problem, `${id} fails otherwise than arrow.known-failures.json says`).toContain(listed.fails);
    });
  }
  it('every column of every gold file, listed cases included, has a comparison for its type', () => {
    // expecter() throws for a type it cannot compare; listed cases stop before their values, so check here.
    const without: string[] = [];
    for (const { v, base } of cases.filter((c) => c.ext === 'stream')) {
      const doc = parseGold(gunzipSync(readFileSync(join(root, v, `${base}.json.gz`))).toString('utf8'));
      const dicts = goldDictionaries(doc);
      for (const batch of doc.batches) {
        batch.columns.forEach((col, c) => {
          try {
            expecter(doc.schema.fields[c], col, dicts);
          } catch (e) {
            without.push(`${v}/${base} ${col.name}: ${(e as Error).message}`);
          }
        });
      }
    }
    expect(without).toEqual([]);
  });
  it('the known-failures list names only cases that exist, each with a reason', () => {
    const ids = new Set(cases.map(({ v, base, ext }) => `${v}/${base}.${ext}`));
    expect(Object.keys(known.cases).filter((c) => !ids.has(c)), 'no such case').toEqual([]);
    for (const [id, c] of Object.entries(known.cases)) {
      expect(c.why.length, `${id}: why`).toBeGreaterThan(10);
      expect(c.fails.length, `${id}: fails`).toBeGreaterThan(0);
    }
  });
});

describe('big-endian gold files (arrow-testing 1.0.0-bigendian): refused, never wrong numbers', () => {
  const dir = join(root, '1.0.0-bigendian');
  for (const f of readdirSync(dir).filter((n) => n.endsWith('.arrow_file') || n.endsWith('.stream'))) {
    it(f, async () => {
      const { info, rows } = await readAll(join(dir, f));
      expect(info.facts?.endianness).toBe('big');
      expect(info.findings.some((x) => x.rule === 'read-unsupported' && /big-endian/.test(x.message))).toBe(true);
      expect(rows.length).toBe(0);
    });
  }
});

describe('forward compatibility (arrow-testing data/forward-compatibility)', () => {
  it('rejects schema_v6.arrow, a metadata version newer than V5, with a clear finding', async () => {
    const p = join(requireTestdata('arrow/forward-compatibility'), 'schema_v6.arrow');
    const s = new ArrowFileSource(p);
    const info = await s.open();
    await s.close();
    const f = info.findings.find((x) => x.rule === 'read-unsupported');
    expect(f?.message).toMatch(/version V6/);
    expect(info.entries).toBe(0);
  });
});

describe('fuzzing crash reproducers (arrow-testing): fail cleanly, no throw, no hang', () => {
  const dirs = [requireTestdata('arrow/fuzz-crashes'), requireTestdata('arrow/ipc-stream')];
  for (const dir of dirs) {
    for (const f of readdirSync(dir).filter((n) => !n.endsWith('.md') && !statSync(join(dir, n)).isDirectory())) {
      it(f, async () => {
        const Source = dir.endsWith('fuzz-crashes') ? ArrowFileSource : ArrowStreamSource;
        const s = new Source(join(dir, f));
        const info = await s.open();
        const full = await s.index();
        const rows = await s.read(0, Math.min(full.entries, 2000));
        await s.close();
        // SOURCES.md asks only that a reader fails cleanly: every call settled, and every row it
        // returned is either a value or carries a finding saying why not.
        expect(info.path).toBe(join(dir, f));
        expect(rows.length).toBe(Math.min(full.entries, 2000));
        for (const r of rows) if (r.value === undefined && r.rowInGroup === 0) expect(r.findings.length).toBeGreaterThan(0);
      });
    }
  }
});
