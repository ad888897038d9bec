// Search, sort and filter over a whole shard, without rewriting it: a query turns per-entry facts
// into an order of entries (a permutation of a subset), which the record view pages through.
// The facts that need the records (a text match, the number of turns, a column's value) are
// gathered by a scan in the reading worker; those the analysis knows (tokens, findings) come from
// the tally. Pure: the same functions run in the worker, the host and the tests.

import type { CheckConfig } from './config.js';
import type { Severity } from './findings.js';
import { readRecord } from './layouts/index.js';

export interface SearchSpec {
  text: string;
  regex: boolean;
  caseSensitive: boolean;
}

export type FilterSpec =
  | { kind: 'findings' }
  | { kind: 'severity'; severity: Severity }
  | { kind: 'rule'; rule: string }
  | { kind: 'overContext' }
  | { kind: 'tokensAtLeast'; tokens: number }
  | { kind: 'column'; column: string; value: Scalar };

export type SortKey = 'tokens' | 'turns' | 'findings' | 'column';

export interface SortSpec {
  key: SortKey;
  /** For `column`: the top-level field. */
  column?: string;
  descending: boolean;
}

export interface ViewQuery {
  search?: SearchSpec;
  filter?: FilterSpec;
  sort?: SortSpec;
}

export type Scalar = string | number | boolean | null;

/** What the reading worker gathers per entry for a query (only what the query needs). */
export interface ScanNeeds {
  search?: SearchSpec;
  turns?: boolean;
  column?: string;
}

export interface ScanFacts {
  /** 1 where the record's text matches the search. */
  match?: Uint8Array;
  /** Turns per entry; -1 where the entry holds no record. */
  turns?: Int32Array;
  /** The column's scalar value per entry (undefined where absent or not a scalar). */
  column?: (Scalar | undefined)[];
}

/** What the analysis knows of an entry. */
export interface AnalysisFacts {
  /** Per record index: its tokens (the longest sequence), or null when not counted. */
  tokensOf(record: number): number | null;
  /** The findings of an entry: their severities and rules. */
  findingsOf(entry: number): readonly { severity: Severity; rule: string }[];
  contextLength: number;
}

export class QueryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'QueryError';
  }
}

/** The scan's needs for a query; null when the analysis alone answers it. */
export function scanNeeds(q: ViewQuery): ScanNeeds | null {
  const needs: ScanNeeds = {};
  if (q.search && q.search.text !== '') needs.search = q.search;
  if (q.sort?.key === 'turns') needs.turns = true;
  const col = q.sort?.key === 'column' ? q.sort.column : q.filter?.kind === 'column' ? q.filter.column : undefined;
  if (col !== undefined) needs.column = col;
  if (q.sort?.key === 'column' && q.filter?.kind === 'column' && q.sort.column !== q.filter.column) {
    throw new QueryError('sorting by one column while filtering by another is not supported: sort by the filtered column, or by tokens, turns or findings');
  }
  return Object.keys(needs).length ? needs : null;
}

/** A test for strings: plain text or a regular expression, with or without case. */
export function compileSearch(s: SearchSpec): (text: string) => boolean {
  if (s.regex) {
    let re: RegExp;
    try {
      re = new RegExp(s.text, s.caseSensitive ? 'u' : 'iu');
    } catch (e) {
      throw new QueryError(`not a regular expression: ${(e as Error).message}`);
    }
    return (t) => re.test(t);
  }
  if (s.caseSensitive) return (t) => t.includes(s.text);
  const needle = s.text.toLowerCase();
  return (t) => t.toLowerCase().includes(needle);
}

/** Whether any string in the record (a value, at any depth; not a key) passes the test. */
export function recordMatches(value: unknown, test: (text: string) => boolean): boolean {
  const stack: unknown[] = [value];
  while (stack.length) {
    const v = stack.pop();
    if (typeof v === 'string') {
      if (test(v)) return true;
    } else if (Array.isArray(v)) {
      for (const x of v) stack.push(x);
    } else if (v !== null && typeof v === 'object' && !(v instanceof Uint8Array)) {
      for (const x of Object.values(v as Record<string, unknown>)) stack.push(x);
    }
  }
  return false;
}

/** Turns of a record: of its longest turn list, as the layout reads it (0 for plain text). */
export function turnCount(value: unknown, config: CheckConfig): number {
  const r = readRecord(value, config);
  if (!r) return 0;
  return r.turnLists.reduce((n, l) => Math.max(n, l.turns.length), 0);
}

/** A top-level field's value when it is a scalar. */
export function scalarAt(value: unknown, column: string): Scalar | undefined {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return undefined;
  const v = (value as Record<string, unknown>)[column];
  if (v === null || typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean') return v;
  return undefined;
}

/** Gathers one entry's facts into the arrays (the worker's side of a query). */
export class FactGatherer {
  readonly facts: ScanFacts = {};
  private readonly test: ((t: string) => boolean) | null;

  constructor(
    private readonly needs: ScanNeeds,
    private readonly config: CheckConfig,
    size: number,
  ) {
    this.test = needs.search ? compileSearch(needs.search) : null;
    if (this.test) this.facts.match = new Uint8Array(size);
    if (needs.turns) this.facts.turns = new Int32Array(size).fill(-1);
    if (needs.column !== undefined) this.facts.column = new Array(size);
  }

  add(entry: number, value: unknown): void {
    if (value === undefined) return;
    if (this.test && recordMatches(value, this.test)) this.facts.match![entry] = 1;
    if (this.facts.turns) this.facts.turns[entry] = turnCount(value, this.config);
    if (this.facts.column) this.facts.column[entry] = scalarAt(value, this.needs.column!);
  }
}

const RANK: Record<Severity, number> = { error: 3, warning: 2, info: 1 };

/**
 * The entries a query shows, in its order: filtered (all conditions), then sorted stably (equal
 * keys keep file order; entries without a key go last). `records` maps entry → record index.
 */
export function buildOrder(count: number, record: (entry: number) => number | null, q: ViewQuery, facts: ScanFacts, a: AnalysisFacts): Int32Array {
  const keep: number[] = [];
  const searching = !!(q.search && q.search.text !== '');
  for (let e = 0; e < count; e++) {
    if (searching && !facts.match?.[e]) continue;
    if (q.filter && !passes(e, record(e), q.filter, facts, a)) continue;
    keep.push(e);
  }
  if (q.sort) {
    const key = sortKey(q.sort, record, facts, a);
    const dir = q.sort.descending ? -1 : 1;
    const keyed = keep.map((e) => ({ e, k: key(e) }));
    keyed.sort((x, y) => {
      if (x.k === undefined || y.k === undefined) return x.k === y.k ? x.e - y.e : x.k === undefined ? 1 : -1;
      const c = compareScalar(x.k, y.k);
      return c !== 0 ? c * dir : x.e - y.e;
    });
    return Int32Array.from(keyed, (x) => x.e);
  }
  return Int32Array.from(keep);
}

function passes(e: number, rec: number | null, f: FilterSpec, facts: ScanFacts, a: AnalysisFacts): boolean {
  switch (f.kind) {
    case 'findings':
      return a.findingsOf(e).length > 0;
    case 'severity':
      return a.findingsOf(e).some((x) => x.severity === f.severity);
    case 'rule':
      return a.findingsOf(e).some((x) => x.rule === f.rule);
    case 'overContext': {
      const t = rec === null ? null : a.tokensOf(rec);
      return t !== null && t > a.contextLength;
    }
    case 'tokensAtLeast': {
      const t = rec === null ? null : a.tokensOf(rec);
      return t !== null && t >= f.tokens;
    }
    case 'column':
      return facts.column !== undefined && facts.column[e] !== undefined && facts.column[e] === f.value;
  }
}

function sortKey(s: SortSpec, record: (entry: number) => number | null, facts: ScanFacts, a: AnalysisFacts): (e: number) => Scalar | undefined {
  switch (s.key) {
    case 'tokens':
      return (e) => {
        const r = record(e);
        const t = r === null ? null : a.tokensOf(r);
        return t === null ? undefined : t;
      };
    case 'findings':
      // Most severe first within the count: a record with 2 errors before one with 2 warnings.
      return (e) => {
        const list = a.findingsOf(e);
        return list.length * 4 + list.reduce((m, x) => Math.max(m, RANK[x.severity]), 0);
      };
    case 'turns':
      return (e) => {
        const n = facts.turns?.[e];
        return n === undefined || n < 0 ? undefined : n;
      };
    case 'column':
      // A null sorts with the records that lack the field: last, whatever the direction.
      return (e) => facts.column?.[e] ?? undefined;
  }
}

/** Numbers before strings before booleans. */
function compareScalar(a: Scalar, b: Scalar): number {
  const order = (v: Scalar) => (typeof v === 'number' ? 0 : typeof v === 'string' ? 1 : typeof v === 'boolean' ? 2 : 3);
  const oa = order(a);
  const ob = order(b);
  if (oa !== ob) return oa - ob;
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  if (typeof a === 'string' && typeof b === 'string') return a < b ? -1 : a > b ? 1 : 0;
  if (typeof a === 'boolean' && typeof b === 'boolean') return Number(a) - Number(b);
  return 0;
}

/** The view's label for the header: "search “brake” · sorted by tokens, longest first". */
export function describeQuery(q: ViewQuery): string {
  const parts: string[] = [];
  if (q.search?.text) parts.push(`${q.search.regex ? 'pattern' : 'search'} “${q.search.text}”${q.search.caseSensitive ? ' (case)' : ''}`);
  if (q.filter) {
    const f = q.filter;
    parts.push(
      f.kind === 'findings' ? 'with findings'
      : f.kind === 'severity' ? `with ${f.severity === 'info' ? 'notes' : `${f.severity}s`}`
      : f.kind === 'rule' ? `rule ${f.rule}`
      : f.kind === 'overContext' ? 'over the context length'
      : f.kind === 'tokensAtLeast' ? `${f.tokens.toLocaleString('en-US')} tokens or more`
      : `${f.column} = ${JSON.stringify(f.value)}`,
    );
  }
  if (q.sort) {
    const what = q.sort.key === 'column' ? q.sort.column : q.sort.key;
    const dir = q.sort.key === 'tokens' || q.sort.key === 'turns' ? (q.sort.descending ? 'longest first' : 'shortest first') : q.sort.key === 'findings' ? (q.sort.descending ? 'most first' : 'fewest first') : q.sort.descending ? 'descending' : 'ascending';
    parts.push(`sorted by ${what}, ${dir}`);
  }
  return parts.join(' · ');
}
