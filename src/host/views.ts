// Turns engine entries into what the webviews show: cut, stringified, never trusted.

import { formatPlace } from '../engine/places.js';
import type { Entry } from '../engine/sources/source.js';
import type { Finding } from '../engine/findings.js';
import { worstSeverity, type Severity } from '../engine/findings.js';
import type { ColumnInfo } from '../engine/sources/source.js';
import type { RowView } from '../protocol.js';

export const CELL_CHARS = 160;
export const DETAIL_STRING_CHARS = 20_000;
export const DETAIL_TOTAL_CHARS = 2_000_000;

export function cut(s: string, max: number): string {
  return s.length > max ? `${s.slice(0, max)}…` : s;
}

export function cellText(v: unknown): string {
  if (v === null) return 'null';
  if (v === undefined) return '';
  if (typeof v === 'string') return cut(v.slice(0, CELL_CHARS + 1).replace(/\s+/g, ' '), CELL_CHARS);
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  if (Array.isArray(v)) {
    const first = v.length && typeof v[0] === 'object' && v[0] !== null ? summarizeTurnish(v) : null;
    return first ?? cut(`[${v.length}] ${boundedJson(v, CELL_CHARS + 1)}`, CELL_CHARS);
  }
  return cut(boundedJson(v, CELL_CHARS + 1), CELL_CHARS);
}

/**
 * JSON text of a value, stopping once `max` characters are written: a cell never stringifies a
 * multi-megabyte record to show its first line.
 */
export function boundedJson(v: unknown, max: number): string {
  let out = '';
  const put = (s: string) => {
    out += s.length > max - out.length ? s.slice(0, max - out.length + 1) : s;
    return out.length <= max;
  };
  const walk = (x: unknown): boolean => {
    if (x === null || typeof x !== 'object') {
      const t = typeof x === 'string' ? JSON.stringify(x.length > max ? x.slice(0, max) : x) : (JSON.stringify(x) ?? 'null');
      return put(t);
    }
    if (Array.isArray(x)) {
      if (!put('[')) return false;
      for (let i = 0; i < x.length; i++) {
        if (i && !put(',')) return false;
        if (!walk(x[i])) return false;
      }
      return put(']');
    }
    if (!put('{')) return false;
    let first = true;
    for (const [k, val] of Object.entries(x as Record<string, unknown>)) {
      if (!first && !put(',')) return false;
      first = false;
      if (!put(`${JSON.stringify(k)}:`) || !walk(val)) return false;
    }
    return put('}');
  };
  walk(v);
  return out;
}

/** A list of turns reads better as "4 turns: user › assistant › …" than as raw JSON. */
function summarizeTurnish(v: unknown[]): string | null {
  const roles = v.map((t) => {
    const o = t as Record<string, unknown>;
    const r = o?.role ?? o?.from;
    return typeof r === 'string' ? r : null;
  });
  if (roles.some((r) => r === null)) return null;
  return cut(`${v.length} turn${v.length === 1 ? "" : "s"}: ${roles.join(' › ')}`, CELL_CHARS);
}


/** Columns for a JSONL shard: top-level fields of the first records, in first-seen order. */
export function columnsFromEntries(entries: Entry[], max = 24): ColumnInfo[] {
  const seen = new Map<string, string>();
  for (const e of entries) {
    if (e.value && typeof e.value === 'object' && !Array.isArray(e.value)) {
      for (const [k, v] of Object.entries(e.value as Record<string, unknown>)) {
        if (!seen.has(k) && seen.size < max) seen.set(k, jsonType(v));
      }
    }
  }
  if (seen.size === 0) seen.set('value', 'json');
  return [...seen.entries()].map(([name, type]) => ({ name, type }));
}

function jsonType(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'array';
  return typeof v;
}

export function rowOf(e: Entry, columns: ColumnInfo[], findings: Finding[] | undefined, tokens: number | null): RowView {
  let severity: Severity | null = null;
  for (const f of findings ?? []) severity = worstSeverity(severity, f.severity);
  const cells: Record<string, string> = {};
  if (e.value !== undefined) {
    const obj = e.value && typeof e.value === 'object' && !Array.isArray(e.value) ? (e.value as Record<string, unknown>) : null;
    for (const c of columns) cells[c.name] = obj ? cellText(obj[c.name]) : c.name === columns[0]?.name ? cellText(e.value) : '';
  }
  return {
    entry: e.entry,
    record: e.record,
    place: formatPlace({ line: e.line, entry: e.entry, record: e.record }),
    line: e.line,
    tokens,
    severity,
    findingCount: findings?.length ?? 0,
    cells,
    // The final line of a file still being written is shown as such, not as a broken record.
    raw: e.value === undefined ? (e.incomplete ? 'incomplete (still being written): ' : '') + cut(e.text ?? '', CELL_CHARS * 2) : undefined,
  };
}

/** Cuts every long string in a value for the detail pane; reports whether anything was cut. */
export function cutValue(v: unknown): { value: unknown; truncated: boolean } {
  let budget = DETAIL_TOTAL_CHARS;
  let truncated = false;
  const walk = (x: unknown): unknown => {
    if (typeof x === 'string') {
      const max = Math.min(DETAIL_STRING_CHARS, Math.max(200, budget));
      if (x.length > max) {
        truncated = true;
        budget -= max;
        return `${x.slice(0, max)}…`;
      }
      budget -= x.length;
      return x;
    }
    if (Array.isArray(x)) return x.map(walk);
    if (x && typeof x === 'object') {
      const o: Record<string, unknown> = {};
      for (const [k, val] of Object.entries(x as Record<string, unknown>)) o[k] = walk(val);
      return o;
    }
    return x;
  };
  return { value: walk(v), truncated };
}
