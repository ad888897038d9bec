// Baselines: the findings of an accepted run, so that CI fails only on what is new. A finding is
// known when the baseline holds one of the same rule, in the same file, at the same record
// identity (its id field, else its content hash) — not by line number, which moves when lines do.

import { readFileSync, writeFileSync } from 'node:fs';
import type { FileReport } from './report.js';

export const BASELINE_KIND = 'shardwise-baseline';

interface BaselineDoc {
  kind: typeof BASELINE_KIND;
  version: 1;
  /** [file, rule, record key, count] */
  findings: [string, string, string, number][];
}

const keyOf = (file: string, rule: string, record: string | null) => `${file}\u0000${rule}\u0000${record ?? ''}`;

export class Baseline {
  private counts = new Map<string, number>();

  static read(path: string): Baseline {
    let doc: BaselineDoc;
    try {
      doc = JSON.parse(readFileSync(path, 'utf8'));
    } catch (e) {
      throw new Error(`${path}: cannot read the baseline (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
    }
    if (doc?.kind !== BASELINE_KIND || doc.version !== 1 || !Array.isArray(doc.findings)) {
      throw new Error(`${path}: not a baseline written by \`shardwise check --write-baseline\``);
    }
    const b = new Baseline();
    for (const [file, rule, record, count] of doc.findings) b.counts.set(keyOf(file, rule, record), count);
    return b;
  }

  /** Marks each finding the baseline holds (each baseline entry matches as many findings as it counted). */
  mark(file: FileReport): number {
    let known = 0;
    for (const f of file.findings) {
      const k = keyOf(file.path, f.rule, f.recordKey);
      const left = this.counts.get(k) ?? 0;
      if (left > 0) {
        this.counts.set(k, left - 1);
        f.baseline = true;
        known++;
      }
    }
    return known;
  }
}

export function writeBaseline(path: string, files: FileReport[]): void {
  const counts = new Map<string, [string, string, string, number]>();
  for (const file of files) {
    for (const f of file.findings) {
      const k = keyOf(file.path, f.rule, f.recordKey);
      const e = counts.get(k);
      if (e) e[3]++;
      else counts.set(k, [file.path, f.rule, f.recordKey ?? '', 1]);
    }
  }
  const doc: BaselineDoc = { kind: BASELINE_KIND, version: 1, findings: [...counts.values()] };
  writeFileSync(path, `${JSON.stringify(doc, null, 1)}\n`, { flag: 'w' });
}
