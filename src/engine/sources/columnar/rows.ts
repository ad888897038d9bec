// Turns a decoded record batch into Entries: whole-file row index, group, row in group, plain JSON value.

import type { RecordBatch } from 'apache-arrow';
import type { Entry } from '../source.js';
import { columnValue, type ConvertContext } from './toJson.js';
import { errorText, readFinding } from '../columnarRules.js';

/** Converts rows [from, to) of `batch` (rows counted inside the batch). */
export function batchEntries(
  batch: RecordBatch,
  group: number,
  firstRow: number,
  from: number,
  to: number,
  columns?: string[],
): Entry[] {
  const fields = batch.schema.fields;
  const wanted = columns ? new Set(columns) : null;
  const picks: { name: string; index: number }[] = [];
  fields.forEach((f, index) => {
    if (!wanted || wanted.has(f.name)) picks.push({ name: f.name, index });
  });
  const chunks = picks.map((p) => batch.data.children[p.index]);
  const out: Entry[] = [];
  for (let r = from; r < to; r++) {
    const row = firstRow + r;
    const ctx: ConvertContext = { unsafe: [] };
    const value: Record<string, unknown> = {};
    const place = { record: row, entry: row, group, rowInGroup: r };
    const findings = [];
    for (let k = 0; k < picks.length; k++) {
      let v: unknown;
      try {
        v = columnValue(chunks[k], r, picks[k].name, ctx);
      } catch (e) {
        v = null;
        findings.push(readFinding('read-corrupt', `column "${picks[k].name}" does not decode at this row: ${errorText(e)}`, { ...place, pointer: `/${picks[k].name}` }));
      }
      Object.defineProperty(value, picks[k].name, { value: v, enumerable: true, writable: true, configurable: true });
    }
    for (const u of ctx.unsafe) {
      findings.push(readFinding('number-unsafe', `integer ${u.value} is beyond ±(2^53−1); kept exact as a string`, { ...place, pointer: u.pointer }));
    }
    out.push({ entry: row, record: row, line: null, column: null, group, rowInGroup: r, value, findings });
  }
  return out;
}

/** Entries of rows that could not be decoded: the rows exist, their values do not. */
export function lostEntries(group: number, firstRow: number, from: number, to: number, rule: string, message: string): Entry[] {
  const out: Entry[] = [];
  for (let r = from; r < to; r++) {
    const row = firstRow + r;
    const place = { record: row, entry: row, group, rowInGroup: r };
    // One finding per group, on its first row: a lost batch of a million rows is one problem.
    const findings = r === 0 ? [readFinding(rule, message, place)] : [];
    out.push({ entry: row, record: row, line: null, column: null, group, rowInGroup: r, findings });
  }
  return out;
}

/** Finds the group holding whole-file row `row` by binary search over first rows. */
export function groupOf(firstRows: number[], row: number): number {
  let lo = 0;
  let hi = firstRows.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (firstRows[mid] <= row) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** A small least-recently-used cache bounded by a byte budget. */
export class ByteBudgetCache<V> {
  private map = new Map<number, { value: V; bytes: number }>();
  private total = 0;
  constructor(private readonly budget: number) {}
  get(key: number): V | undefined {
    const hit = this.map.get(key);
    if (!hit) return undefined;
    this.map.delete(key);
    this.map.set(key, hit);
    return hit.value;
  }
  set(key: number, value: V, bytes: number): void {
    this.delete(key);
    this.map.set(key, { value, bytes });
    this.total += bytes;
    for (const [k, v] of this.map) {
      if (this.total <= this.budget || this.map.size <= 1) break;
      this.map.delete(k);
      this.total -= v.bytes;
    }
  }
  delete(key: number): void {
    const hit = this.map.get(key);
    if (hit) {
      this.map.delete(key);
      this.total -= hit.bytes;
    }
  }
  clear(): void {
    this.map.clear();
    this.total = 0;
  }
}
