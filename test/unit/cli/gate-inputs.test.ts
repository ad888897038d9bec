// The CLI gate: many files, folders and globs in input order, exit codes, SARIF 2.1.0.
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

describe('many files: folders, globs, input order, workers', () => {
  it('a folder of 50 shards gives the same report with two workers as in one thread, in input order', async () => {
    const { paths } = shards('fifty', 50, 11);
    const serial = (await shardwise(['check', 'fifty', '--format', 'json', '--in-thread', '--fail-on', 'warning']));
    const parallel = (await shardwise(['check', 'fifty', '--format', 'json', '--workers', '2', '--fail-on', 'warning']));
    expect(serial.code, serial.err).toBe(1);
    expect(parallel.code).toBe(1);
    expect(parallel.out).toBe(serial.out);
    const doc = JSON.parse(serial.out);
    expect(doc.files.map((f: { path: string }) => join(ctx.dir, f.path))).toEqual(paths);
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
    chmodSync(join(ctx.dir, 'locked'), 0o755);
    chmodSync(ctx.dir, 0o755);
    // setpriv (util-linux) drops to nobody: the permission check is the kernel's, not a skipped test.
    const r = await runAsync('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, ctx.cli, 'check', p]);
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
    const verbs = ['check', 'stats', 'merge', 'sample', 'head', 'slice', 'rules'];
    const helps = await Promise.all(verbs.map((verb) => shardwise([verb, '--help'])));
    helps.forEach((r, i) => {
      expect(r.code).toBe(0);
      expect(r.out).toContain(`shardwise ${verbs[i]}`);
    });
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

