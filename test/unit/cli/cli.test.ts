// The `shardwise` CLI, run as users run it: the built bin under node, in a child process.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { get_encoding } from 'tiktoken';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildBundles } from '../helpers/build';

let cli = '';
let dir = '';
beforeAll(() => {
  cli = join(buildBundles(), 'cli.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-cli-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function shardwise(...args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

function file(name: string, content: string | Buffer): string {
  const p = join(dir, name);
  writeFileSync(p, content);
  return p;
}

const chat = (u: string, a: string) => JSON.stringify({ messages: [{ role: 'user', content: u }, { role: 'assistant', content: a }] });

describe('usage and exit codes', () => {
  it('--help exits 0 and shows the usage', () => {
    const r = shardwise('--help');
    expect(r.code).toBe(0);
    expect(r.out).toContain('shardwise check PATH');
  });
  it('bad usage exits 2 with a message', () => {
    expect(shardwise().code).toBe(2);
    const r = shardwise('check', '--nope', 'x.jsonl');
    expect(r.code).toBe(2);
    expect(r.err).toContain('unknown option --nope');
    expect(shardwise('check', '--encoding', 'p50k_nope', file('a.jsonl', '{}\n')).code).toBe(2);
  });
  it('a file that cannot be opened exits 2 naming it', () => {
    const missing = join(dir, 'missing.jsonl');
    const r = shardwise('check', missing);
    expect(r.code).toBe(2);
    expect(r.err).toContain(missing);
    const folder = join(dir, 'folder.jsonl');
    mkdirSync(folder, { recursive: true });
    const f = shardwise('check', folder);
    expect(f.code).toBe(2);
    expect(f.err).toContain('folder');
  });
  it('a clean shard exits 0, one with an error finding exits 1', () => {
    const clean = file('clean.jsonl', `${chat('How do I true a wheel?', 'Use a truing stand.')}\n`);
    expect(shardwise('check', clean).code).toBe(0);
    const bad = file('bad.jsonl', `${chat('a', 'b')}\n{"messages": [\n`);
    expect(shardwise('check', bad).code).toBe(1);
  });
});

describe('the JSON document', () => {
  it('has exactly the documented shape, counts and places', () => {
    const lines = [
      chat('Is my chain worn?', 'Measure it with a chain checker.'),
      '',
      '{"messages": [}',
      JSON.stringify({ messages: [{ role: 'assistant', content: 'hi' }] }),
      // No terminator on the last line (JSON Lines allows it).
      chat('Brake squeal?', 'Clean the rotor.'),
    ];
    const p = file('doc.jsonl', lines.join('\n'));
    const r = shardwise('check', p, '--format', 'json', '--in-thread');
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.out);
    expect(Object.keys(doc)).toEqual(['files', 'total']);
    const f = doc.files[0];
    expect(Object.keys(f).sort()).toEqual(['findings', 'findingsByRule', 'findingsTotal', 'format', 'layout', 'layoutShare', 'path', 'records', 'tokens']);
    expect(f.format).toBe('jsonl');
    // Three lines hold a value; the blank and the broken one are not records.
    expect(f.records).toBe(3);
    expect(Object.keys(f.tokens).sort()).toEqual(['contextLength', 'encoding', 'max', 'overContext', 'p50', 'p90', 'p99', 'prompt', 'response', 'tokenizer', 'total']);
    for (const x of f.findings) {
      expect(Object.keys(x).sort()).toEqual(['column', 'family', 'line', 'message', 'pointer', 'record', 'recordKey', 'rule', 'severity']);
      expect(['read', 'json', 'encoding', 'chat', 'schema', 'tokens']).toContain(x.family);
      expect(['error', 'warning', 'info']).toContain(x.severity);
    }
    const blank = f.findings.find((x: { line: number }) => x.line === 2);
    expect(blank).toMatchObject({ family: 'json', record: null, line: 2 });
    const broken = f.findings.find((x: { line: number }) => x.line === 3);
    expect(broken).toMatchObject({ family: 'json', severity: 'error', record: null, line: 3 });
    // Line 4 is record 1 (0-based among records): its conversation starts with the assistant.
    const chatIssue = f.findings.find((x: { line: number; family: string }) => x.line === 4 && x.family === 'chat');
    expect(chatIssue).toMatchObject({ record: 1 });
  });

  it('places schema errors at the UTF-16 column of the value (as VS Code and SARIF count)', () => {
    const schema = file('s.schema.json', JSON.stringify({ type: 'object', properties: { lang: { type: 'string' } }, required: ['id'] }));
    const line = '{"note":"🚲 tubeless 日本","lang":5}';
    const p = file('cols.jsonl', `${line}\n`);
    const doc = JSON.parse(shardwise('check', p, '--schema', schema, '--format', 'json', '--in-thread').out);
    const langErr = doc.files[0].findings.find((x: { pointer: string; family: string }) => x.family === 'schema' && x.pointer === '/lang');
    // String.indexOf counts UTF-16 code units: the independent measure of the column.
    expect(langErr.column).toBe(line.indexOf('5') + 1);
    const missing = doc.files[0].findings.find((x: { pointer: string; family: string }) => x.family === 'schema' && x.pointer === '');
    expect(missing.column).toBe(1);
  });

  it('token totals equal the reference tokenizer (tiktoken WASM) over every record', () => {
    const texts = ['Spoke tension 🚲 matters.', '  leading spaces\u00a0and NBSP', 'The rear derailleur\u2028hanger', '自転車のブレーキ調整'];
    const p = file('tok.jsonl', texts.map((t) => JSON.stringify({ text: t })).join('\n') + '\n');
    for (const enc of ['cl100k_base', 'o200k_base'] as const) {
      const doc = JSON.parse(shardwise('check', p, '--encoding', enc, '--format', 'json', '--in-thread').out);
      const ref = get_encoding(enc);
      const expected = texts.reduce((n, t) => n + ref.encode_ordinary(t).length, 0);
      ref.free();
      expect(doc.files[0].tokens.total).toBe(expected);
      expect(doc.files[0].tokens.encoding).toBe(enc);
    }
  });

  it('worker threads give the same document as a single thread', () => {
    const rows: string[] = [];
    for (let i = 0; i < 3000; i++) {
      if (i % 97 === 0) rows.push('{"broken": ');
      else if (i % 89 === 0) rows.push('');
      else rows.push(i % 2 ? chat(`Question ${i} about spokes`, `Answer ${i}`) : JSON.stringify({ messages: [{ role: 'user', content: `q${i}` }] }));
    }
    const p = file('many.jsonl', rows.join('\n') + '\n');
    const one = JSON.parse(shardwise('check', p, '--format', 'json', '--in-thread').out);
    const two = JSON.parse(shardwise('check', p, '--format', 'json', '--workers', '2').out);
    // The record identities of unparseable lines are content hashes: equal across runs too.
    expect(two).toEqual(one);
    expect(one.files[0].findings.length).toBeGreaterThan(1000);
  });

  it('counts records over the context length', () => {
    const long = 'pedal '.repeat(400);
    const p = file('ctx.jsonl', [JSON.stringify({ text: long }), JSON.stringify({ text: 'short' })].join('\n') + '\n');
    const doc = JSON.parse(shardwise('check', p, '--context', '100', '--format', 'json', '--in-thread').out);
    expect(doc.files[0].tokens.overContext).toBe(1);
    expect(doc.files[0].tokens.contextLength).toBe(100);
    expect(doc.files[0].findings.some((x: { rule: string }) => x.rule === 'tokens-over-context')).toBe(true);
  });

  it('the text format names file:line:column', () => {
    const p = file('txt.jsonl', '{"a":1}\n{"a":\n');
    const r = shardwise('check', p);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(new RegExp(`${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}:2:\\d+: error json-syntax`));
  });

  it('places findings inside a pretty-printed JSON array at their own line and column', () => {
    const records = [
      { id: 'a', messages: [{ role: 'user', content: 'Squeaky chain?' }, { role: 'assistant', content: 'Degrease, then oil.' }] },
      { id: 'b', lang: 7, messages: [{ role: 'user', content: 'Tubeless 🚲 sealant?' }, { role: 'assistant', content: 'Top up every few months.' }] },
    ];
    const text = JSON.stringify(records, null, 2);
    const p = file('array.json', text);
    const schema = file('arr.schema.json', JSON.stringify({ type: 'object', properties: { lang: { type: 'string' } } }));
    const doc = JSON.parse(shardwise('check', p, '--schema', schema, '--format', 'json', '--in-thread').out);
    expect(doc.files[0].format).toBe('json-array');
    expect(doc.files[0].records).toBe(2);
    const f = doc.files[0].findings.find((x: { pointer: string }) => x.pointer === '/lang');
    // Independent measure: where `7` stands in the text, counted in lines and UTF-16 units.
    const at = text.indexOf('"lang": 7') + '"lang": '.length;
    const before = text.slice(0, at).split('\n');
    expect(f).toMatchObject({ record: 1, line: before.length, column: before[before.length - 1].length + 1 });
  });
});

