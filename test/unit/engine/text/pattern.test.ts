// JSON Schema patterns without catastrophic backtracking. Oracle: Node's built-in ECMA-262 RegExp
// engine (the dialect JSON Schema 2020-12 §6.4 names for `pattern`), compared on every pattern
// and string below; the hostile case is the classic exponential one (`^(a+)+$`, OWASP's ReDoS
// page, from memory).
import { describe, expect, it } from 'vitest';
import { PatternBudgetError, compilePattern, toRe2Syntax, withDeadline } from '../../../../src/engine/text/pattern';
import { compileSchema } from '../../../../src/engine/checks/schema';

const PATTERNS = [
  '^(a+)+$',
  '^[a-z0-9-]+$',
  '^\\S+$',
  '\\s',
  '^.+$',
  '^(user|assistant|system|tool)$',
  '^\\d{4}-\\d{2}-\\d{2}$',
  '\\u00e9',
  '\\u{1F6B2}',
  '^[\\w.-]+@[\\w-]+\\.[a-z]{2,}$',
  '^[^\\s]+$',
  '(?=.*brake)',
  '(a)\\1',
  '^\\p{L}+$',
  'wheel$',
  '[]',
  '[^]',
];
const STRINGS = ['', 'a', 'aaaa', 'brake-pad-2', 'ab\u00a0c', 'tab\there', 'line\nnext', 'caf\u00e9', 'bike \u{1F6B2}', '2026-12-02', 'me@coop.bike', 'aa', 'Ünïcödé', 'true wheel', 'wheel\n', '\u2028', '\ufeff'];

describe('patterns match as ECMA-262 RegExp does (oracle: the built-in engine)', () => {
  for (const p of PATTERNS) {
    it(p, () => {
      const ours = compilePattern(p, 'u');
      const native = new RegExp(p, 'u');
      for (const s of STRINGS) expect(ours.test(s), `${JSON.stringify(p)} on ${JSON.stringify(s)}`).toBe(native.test(s));
    });
  }
  it('patterns RE2 can express run on the linear engine; lookaround and backreferences do not', () => {
    expect(compilePattern('^(a+)+$').engine).toBe('linear');
    expect(compilePattern('^\\S+$').engine).toBe('linear');
    expect(compilePattern('(?=.*brake)').engine).toBe('interruptible');
    expect(compilePattern('(a)\\1').engine).toBe('interruptible');
    expect(toRe2Syntax('.')).toBe('[^\\n\\r\\x{2028}\\x{2029}]');
  });
  it('an invalid ECMA-262 pattern is refused as the built-in engine refuses it', () => {
    expect(() => compilePattern('(', 'u')).toThrow(SyntaxError);
  });
});

describe('a catastrophic pattern never stalls a check', () => {
  const evil = `${'a'.repeat(40)}b`;
  it('^(a+)+$ against 40 a and a b: answered by the linear engine at once', () => {
    const t = Date.now();
    expect(compilePattern('^(a+)+$').test(evil)).toBe(false);
    // Generous bound: the built-in engine needs about 2^40 steps here.
    expect(Date.now() - t).toBeLessThan(2000);
  });
  it('a backtracking pattern RE2 cannot run is interrupted at the deadline', () => {
    const m = compilePattern('^(?=(a+)+$)');
    expect(m.engine).toBe('interruptible');
    const t = Date.now();
    expect(() => withDeadline(100, () => m.test(evil))).toThrow(PatternBudgetError);
    expect(Date.now() - t).toBeLessThan(5000);
  });
  it('in a schema: the record gets a schema-timeout finding, the next record is checked normally', () => {
    const validate = compileSchema({ type: 'object', properties: { tag: { type: 'string', pattern: '^(?=(a+)+$)' }, n: { type: 'integer' } } }, 'test', { timeBudgetMs: 100 });
    const t = Date.now();
    const issues = validate({ tag: evil, n: 1 });
    expect(Date.now() - t).toBeLessThan(5000);
    expect(issues).toHaveLength(1);
    expect(issues[0].rule).toBe('schema-timeout');
    expect(issues[0].message).toMatch(/100 ms budget.*not fully checked/);
    expect(validate({ tag: 'aaa', n: 'x' }).map((i) => i.rule)).toEqual(['schema-violation']);
  });
  it('in a schema: ^(a+)+$ gives a plain violation, quickly', () => {
    const validate = compileSchema({ properties: { tag: { pattern: '^(a+)+$' } } }, 'test');
    const issues = validate({ tag: evil });
    expect(issues.map((i) => i.rule)).toEqual(['schema-violation']);
    expect(validate({ tag: 'aaaa' })).toEqual([]);
  });
  it('patternProperties use the same engine', () => {
    const validate = compileSchema({ patternProperties: { '^(a+)+$': { type: 'number' } } }, 'test');
    expect(validate({ [evil]: 'x', aaaa: 'y' }).map((i) => i.pointer)).toEqual(['/aaaa']);
  });
});

describe('a schema never reaches the network', () => {
  it('a $ref to a network address is refused at compile time, synchronously (nothing is fetched)', () => {
    const t = Date.now();
    expect(() => compileSchema({ properties: { a: { $ref: 'https://schemas.example.invalid/part.json' } } }, 'test')).toThrow(/does not compile.*resolve reference/i);
    expect(Date.now() - t).toBeLessThan(2000);
  });
});
