// Arrow IPC file and stream sources against apache/arrow-testing's integration gold files
// (../shared/testdata/arrow, SOURCES.md: arrow-testing data/arrow-ipc-stream, commit 9cfebfef):
// each X.arrow_file and X.stream must equal X.json.gz (Arrow's integration JSON format) or give a
// clear message; cases that give messages are listed in arrow.known-failures.json, which may only shrink.

import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { gunzipSync } from 'node:zlib';
import { join } from 'node:path';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile.js';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream.js';
import type { Entry, SourceInfo } from '../../../../src/engine/sources/source.js';
import { requireTestdata } from './testdata.js';

const known = JSON.parse(readFileSync(new URL('./arrow.known-failures.json', import.meta.url), 'utf8')) as { cases: string[] };

interface JField { name: string; type: { name: string; bitWidth?: number; precision?: string }; dictionary?: unknown; children?: JField[] }
interface JColumn { name: string; count: number; VALIDITY?: number[]; DATA?: unknown[] }
interface JDoc { schema: { fields: JField[] }; batches: { count: number; columns: JColumn[] }[] }

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

/** Compares one primitive value with its integration-JSON form; null when the type is not compared. */
function sameValue(field: JField, ours: unknown, theirs: unknown): boolean | null {
  const t = field.type.name;
  if (field.dictionary) return null;
  if (t === 'int') return String(ours) === String(theirs);
  if (t === 'bool') return ours === theirs;
  if (t === 'utf8' || t === 'largeutf8') return ours === theirs;
  if (t === 'floatingpoint') {
    const a = Number(ours);
    const b = Number(theirs);
    if (field.type.precision === 'DOUBLE') return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(b));
    // Integration JSON prints float32/float16 values rounded; compare at a relative 1e-3.
    return Math.abs(a - b) <= 1e-3 * Math.max(1, Math.abs(b));
  }
  return null;
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
  let row = 0;
  for (const batch of doc.batches) {
    for (let r = 0; r < batch.count; r++, row++) {
      const value = rows[row].value as Record<string, unknown>;
      batch.columns.forEach((col, c) => {
        const field = doc.schema.fields[c];
        const valid = col.VALIDITY ? col.VALIDITY[r] === 1 : true;
        const ours = Object.values(value)[c];
        if (!valid) {
          if (ours !== null) throw new Error(`${field.name} row ${row}: expected null, got ${JSON.stringify(ours)}`);
          return;
        }
        if (!col.DATA) return;
        const same = sameValue(field, ours, col.DATA[r]);
        if (same === false) throw new Error(`${field.name} row ${row}: expected ${JSON.stringify(col.DATA[r])}, got ${JSON.stringify(ours)}`);
      });
    }
  }
  return null;
}

const root = requireTestdata('arrow/ipc-stream/integration');
const versions = readdirSync(root).filter((v) => statSync(join(root, v)).isDirectory() && !v.includes('bigendian'));

describe('Arrow integration gold files (arrow-testing, little-endian folders)', () => {
  const failing: string[] = [];
  for (const v of versions) {
    for (const f of readdirSync(join(root, v)).filter((n) => n.endsWith('.json.gz'))) {
      const base = f.slice(0, -'.json.gz'.length);
      for (const ext of ['arrow_file', 'stream']) {
        const id = `${v}/${base}.${ext}`;
        it(id, async () => {
          const doc = JSON.parse(gunzipSync(readFileSync(join(root, v, f))).toString('utf8')) as JDoc;
          let problem: string | null;
          try {
            problem = await compare(join(root, v, `${base}.${ext}`), doc);
          } catch (e) {
            problem = (e as Error).message;
          }
          if (problem) failing.push(id);
          if (known.cases.includes(id)) {
            // A listed case must at least fail with a message, never silently differ.
            if (problem) expect(problem.length).toBeGreaterThan(0);
          } else {
            expect(problem).toBeNull();
          }
        });
      }
    }
  }
  it('the known-failures list only names cases that still fail (it may only shrink)', () => {
    const fixed = known.cases.filter((c) => !failing.includes(c));
    expect(fixed, 'these now pass: remove them from arrow.known-failures.json').toEqual([]);
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
