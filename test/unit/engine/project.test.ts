// The project file's declarations, parsing and layering: the one place the editor and the CLI read
// a project's settings through.
import { describe, expect, it } from 'vitest';
import { configFromValues, parseProjectFile, searchDirs, settleFileSettings, ProjectFileError, SETTINGS } from '../../../src/engine/project';
import { applyPolicy, hash64, recordKey } from '../../../src/engine/policy';
import type { Finding } from '../../../src/engine/findings';

const parse = (doc: unknown, rules?: string[]) => parseProjectFile('/p/shardwise.json', '/p', JSON.stringify(doc), rules ? new Set(rules) : undefined);

describe('parseProjectFile', () => {
  it('reads nested and dotted keys alike', () => {
    const a = parse({ tokens: { contextLength: 4096 }, chat: { roles: ['user', 'assistant'] } }).values;
    const b = parse({ 'tokens.contextLength': 4096, 'chat.roles': ['user', 'assistant'] }).values;
    expect(a).toEqual(b);
    expect(a['tokens.contextLength']).toBe(4096);
  });
  it('names the file and the key of every mistake', () => {
    expect(() => parse({ tokens: { contextLength: 0 } })).toThrow(/shardwise\.json: "tokens\.contextLength" must be between 1 and/);
    expect(() => parse({ tokens: { contextLength: 'long' } })).toThrow(/must be a whole number/);
    expect(() => parse({ layout: { default: 'chatml' } })).toThrow(/"layout\.default" must be one of auto, /);
    expect(() => parse({ rules: { 'chat-role-repeated': 'loud' } })).toThrow(/entry "chat-role-repeated" must be one of error, warning, info, off/);
    expect(() => parse({ tokenz: {} })).toThrow(/unknown setting "tokenz"/);
    expect(() => parseProjectFile('/p/shardwise.json', '/p', '{"a": ')).toThrow(ProjectFileError);
    expect(() => parse([1, 2])).toThrow(/must hold one JSON object/);
  });
  it('refuses an unknown rule id with the nearest known one', () => {
    expect(() => parse({ rules: { 'json-syntx': 'off' } }, ['json-syntax', 'line-blank'])).toThrow(/did you mean "json-syntax"/);
    expect(parse({ rules: { 'json-syntax': 'off' } }, ['json-syntax']).values.rules).toEqual({ 'json-syntax': 'off' });
  });
  it('ignores $schema and comment keys', () => {
    expect(parse({ $schema: 'x', '// why': 'because', check: { failOn: 'never' } }).values).toEqual({ 'check.failOn': 'never' });
  });
  it('declares every setting once', () => {
    const keys = SETTINGS.map((s) => s.key);
    expect(new Set(keys).size).toBe(keys.length);
  });
});

describe('settleFileSettings', () => {
  const file = parse({ schemas: { 'data/**/*.jsonl': 'schemas/chat.json' }, 'layout.byGlob': { 'prefs/*.jsonl': 'preference' }, tokens: { contextLength: 100 }, rules: { 'line-blank': 'off', 'key-duplicate': 'error' } });
  it('matches globs relative to the project file’s folder and lets the command line win', () => {
    const s = settleFileSettings(
      [
        { values: file.values, dir: '/p', from: file.path },
        { values: { 'tokens.contextLength': 9000, rules: { 'key-duplicate': 'info' } }, dir: '/cwd', from: 'the command line' },
      ],
      (dir) => (dir === '/p' ? 'data/a/b.jsonl' : '../p/data/a/b.jsonl'),
      'b.jsonl',
    );
    expect(s.schema).toMatchObject({ path: 'schemas/chat.json', base: '/p', glob: 'data/**/*.jsonl' });
    expect(s.config.contextLength).toBe(9000);
    expect(s.config.rules).toEqual({ 'line-blank': 'off', 'key-duplicate': 'info' });
    expect(s.failOn).toBe('error');
  });
  it('a layout glob applies unless a later layer sets the layout', () => {
    const rel = () => 'prefs/x.jsonl';
    expect(settleFileSettings([{ values: file.values, dir: '/p', from: 'f' }], rel, 'x.jsonl').config.layout.id).toBe('preference');
    expect(settleFileSettings([{ values: file.values, dir: '/p', from: 'f' }, { values: { 'layout.default': 'turns' }, dir: null, from: 'cli' }], rel, 'x.jsonl').config.layout.id).toBe('turns');
  });
  it('with no layers gives the defaults', () => {
    const s = settleFileSettings([], () => 'a', 'a');
    expect(s.config).toEqual(configFromValues({}));
    expect(s.schema).toBeNull();
    expect(s.maxFindings).toBeNull();
  });
});

describe('searchDirs', () => {
  const parent = (d: string) => (d === '/' ? '/' : d.replace(/\/[^/]+$/, '') || '/');
  it('walks up to the repository root and no further', () => {
    expect(searchDirs('/r/data/deep', (d) => d === '/r', parent)).toEqual(['/r/data/deep', '/r/data', '/r']);
  });
  it('stops at the file system root', () => {
    expect(searchDirs('/a/b', () => false, parent)).toEqual(['/a/b', '/a', '/']);
  });
});

describe('rule policy and record identity', () => {
  const f: Finding = { rule: 'line-blank', family: 'json', severity: 'warning', message: 'm', record: null, line: 2, column: 1, pointer: null, entry: 1 };
  it('turns a rule off or changes its severity, leaving others alone', () => {
    expect(applyPolicy(f, { 'line-blank': 'off' })).toBeNull();
    expect(applyPolicy(f, { 'line-blank': 'error' })?.severity).toBe('error');
    expect(applyPolicy(f, { other: 'off' })).toBe(f);
  });
  it('names a record by its id field, else by a hash of its content that ignores key order', () => {
    expect(recordKey({ id: 'abc', text: 'x' }, undefined)).toBe('id=abc');
    expect(recordKey({ uuid: 7 }, undefined)).toBe('uuid=7');
    expect(recordKey({ b: 1, a: 2 }, undefined)).toBe(recordKey({ a: 2, b: 1 }, undefined));
    expect(recordKey({ a: 1 }, undefined)).not.toBe(recordKey({ a: 2 }, undefined));
  });
  it('hashes to 16 hex digits, spread over both halves', () => {
    const seen = new Set<string>();
    for (let i = 0; i < 5000; i++) seen.add(hash64(`record ${i}`));
    expect(seen.size).toBe(5000);
    for (const h of seen) expect(h).toMatch(/^[0-9a-f]{16}$/);
  });
});
