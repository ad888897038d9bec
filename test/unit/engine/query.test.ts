// Search, sort and filter against a naive implementation written here (the oracle): each record
// checked on its own with plain JavaScript, then Array.prototype.sort over (key, file order).
import { describe, expect, it } from 'vitest';
import { withDefaults } from '../../../src/engine/config';
import type { Severity } from '../../../src/engine/findings';
import { buildOrder, compileSearch, describeQuery, FactGatherer, QueryError, scanNeeds, type ViewQuery } from '../../../src/engine/query';
import { mulberry32 } from '../helpers/random';

const config = withDefaults();
const rand = mulberry32(17);
const pick = <T>(xs: T[]) => xs[Math.floor(rand() * xs.length)];
const words = ['spoke', 'Brake', 'brake', 'chain', 'tubeless', 'Ghent', '自転車', '🚲', 'pedal'];
const sources = ['workshop-kiosk', 'phone', 'email', null, 7];

interface Gen {
  value: unknown;
  record: number | null;
  tokens: number | null;
  findings: { severity: Severity; rule: string }[];
}

// 600 entries: some without a record (a blank or broken line), some uncounted.
const gen: Gen[] = [];
let rec = 0;
for (let e = 0; e < 600; e++) {
  if (rand() < 0.05) {
    gen.push({ value: undefined, record: null, tokens: null, findings: [{ severity: 'error', rule: 'json-syntax' }] });
    continue;
  }
  const turns = 1 + Math.floor(rand() * 6);
  const messages = Array.from({ length: turns }, (_, i) => ({ role: i % 2 ? 'assistant' : 'user', content: Array.from({ length: 3 }, () => pick(words)).join(' ') }));
  const findings: Gen['findings'] = [];
  if (rand() < 0.2) findings.push({ severity: pick<Severity>(['error', 'warning', 'info']), rule: pick(['chat-role-repeated', 'tokens-over-context', 'schema-violation']) });
  if (rand() < 0.05) findings.push({ severity: 'warning', rule: 'key-duplicate' });
  gen.push({ value: { id: `r${e}`, source: pick(sources), messages }, record: rec++, tokens: rand() < 0.1 ? null : Math.floor(rand() * 300), findings });
}

const analysis = {
  tokensOf: (r: number) => gen.find((g) => g.record === r)?.tokens ?? null,
  findingsOf: (e: number) => gen[e].findings,
  contextLength: 200,
};

function facts(q: ViewQuery) {
  const needs = scanNeeds(q);
  if (!needs) return {};
  const g = new FactGatherer(needs, config, gen.length);
  gen.forEach((x, e) => g.add(e, x.value));
  return g.facts;
}

const run = (q: ViewQuery) => [...buildOrder(gen.length, (e) => gen[e].record, q, facts(q), analysis)];

// ---- the oracle ----
function strings(v: unknown, out: string[] = []): string[] {
  if (typeof v === 'string') out.push(v);
  else if (Array.isArray(v)) v.forEach((x) => strings(x, out));
  else if (v && typeof v === 'object') for (const k of Object.keys(v)) strings((v as Record<string, unknown>)[k], out);
  return out;
}
function naive(q: ViewQuery): number[] {
  let es = gen.map((_, e) => e);
  if (q.search?.text) {
    const s = q.search;
    es = es.filter((e) => gen[e].value !== undefined && strings(gen[e].value).some((t) => (s.regex ? new RegExp(s.text, s.caseSensitive ? 'u' : 'iu').test(t) : s.caseSensitive ? t.includes(s.text) : t.toLowerCase().includes(s.text.toLowerCase()))));
  }
  const f = q.filter;
  if (f) {
    es = es.filter((e) => {
      const g = gen[e];
      if (f.kind === 'findings') return g.findings.length > 0;
      if (f.kind === 'severity') return g.findings.some((x) => x.severity === f.severity);
      if (f.kind === 'rule') return g.findings.some((x) => x.rule === f.rule);
      if (f.kind === 'overContext') return g.tokens !== null && g.tokens > 200;
      if (f.kind === 'tokensAtLeast') return g.tokens !== null && g.tokens >= f.tokens;
      return g.value !== undefined && (g.value as Record<string, unknown>)[f.column] === f.value;
    });
  }
  if (q.sort) {
    const s = q.sort;
    const key = (e: number): number | string | undefined => {
      const g = gen[e];
      if (s.key === 'tokens') return g.tokens ?? undefined;
      if (s.key === 'findings') return g.findings.length * 4 + Math.max(0, ...g.findings.map((x) => ({ error: 3, warning: 2, info: 1 })[x.severity]));
      if (s.key === 'turns') return g.value === undefined ? undefined : (g.value as { messages: unknown[] }).messages.length;
      const v = g.value === undefined ? undefined : (g.value as Record<string, unknown>)[s.column!];
      return typeof v === 'number' || typeof v === 'string' ? v : undefined;
    };
    const withKey = es.filter((e) => key(e) !== undefined);
    const without = es.filter((e) => key(e) === undefined);
    // Numbers before strings (the columns here hold both), then file order for ties.
    const cls = (k: number | string) => (typeof k === 'number' ? 0 : 1);
    withKey.sort((a, b) => {
      const ka = key(a)!;
      const kb = key(b)!;
      if (cls(ka) !== cls(kb)) return cls(ka) - cls(kb);
      const c = ka < kb ? -1 : ka > kb ? 1 : 0;
      return (s.descending ? -c : c) || a - b;
    });
    es = [...withKey, ...without];
  }
  return es;
}

describe('buildOrder agrees with the naive implementation', () => {
  const queries: [string, ViewQuery][] = [
    ['plain search, any case', { search: { text: 'brake', regex: false, caseSensitive: false } }],
    ['plain search, case', { search: { text: 'Brake', regex: false, caseSensitive: true } }],
    ['regular expression', { search: { text: '^spoke \\S+ 🚲$', regex: true, caseSensitive: false } }],
    ['CJK text', { search: { text: '自転車', regex: false, caseSensitive: false } }],
    ['with findings', { filter: { kind: 'findings' } }],
    ['errors', { filter: { kind: 'severity', severity: 'error' } }],
    ['a rule', { filter: { kind: 'rule', rule: 'schema-violation' } }],
    ['over context', { filter: { kind: 'overContext' } }],
    ['tokens at least 250', { filter: { kind: 'tokensAtLeast', tokens: 250 } }],
    ['a column value', { filter: { kind: 'column', column: 'source', value: 'workshop-kiosk' } }],
    ['tokens, longest first', { sort: { key: 'tokens', descending: true } }],
    ['tokens, shortest first', { sort: { key: 'tokens', descending: false } }],
    ['turns', { sort: { key: 'turns', descending: true } }],
    ['findings', { sort: { key: 'findings', descending: true } }],
    ['a scalar column', { sort: { key: 'column', column: 'source', descending: false } }],
    ['search, filter and sort together', { search: { text: 'chain', regex: false, caseSensitive: false }, filter: { kind: 'findings' }, sort: { key: 'tokens', descending: true } }],
  ];
  for (const [name, q] of queries) {
    it(name, () => {
      const want = naive(q);
      expect(run(q)).toEqual(want);
      // The query is not vacuous on this data.
      if (q.search || q.filter) expect(want.length).toBeGreaterThan(0);
      if (q.search || q.filter) expect(want.length).toBeLessThan(gen.length);
    });
  }
});

describe('queries', () => {
  it('a sort is a permutation: every entry once', () => {
    const order = run({ sort: { key: 'tokens', descending: true } });
    expect([...order].sort((a, b) => a - b)).toEqual(gen.map((_, e) => e));
  });
  it('a bad regular expression is a clear error', () => {
    expect(() => compileSearch({ text: '(unclosed', regex: true, caseSensitive: false })).toThrow(QueryError);
  });
  it('only what the records hold needs a scan', () => {
    expect(scanNeeds({ filter: { kind: 'rule', rule: 'x' }, sort: { key: 'tokens', descending: true } })).toBeNull();
    expect(scanNeeds({ sort: { key: 'turns', descending: true } })).toEqual({ turns: true });
  });
  it('describes itself for the header', () => {
    expect(describeQuery({ search: { text: 'brake', regex: false, caseSensitive: false }, sort: { key: 'tokens', descending: true } })).toBe('search “brake” · sorted by tokens, longest first');
  });
});
