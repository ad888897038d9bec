// End to end over the demo shards: the CLI must find exactly the broken records the demo's
// generator lists in its manifest (our own scenario, so this is an integration test of the whole
// engine, not an outside check), across JSONL, Parquet and Arrow.
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { globToRegExp } from '../../../src/engine/globs';
import { buildBundles, projectRoot } from '../helpers/build';

const demo = join(projectRoot, 'demo-data');
const manifest = JSON.parse(readFileSync(join(demo, 'manifest.json'), 'utf8')) as {
  broken: { file: string; line?: number; row?: number; rules: string[] }[];
};
const schemas = JSON.parse(readFileSync(join(demo, '.vscode/settings.json'), 'utf8'))['shardwise.schemas'] as Record<string, string>;

let cli = '';
beforeAll(() => {
  cli = join(buildBundles(), 'cli.js');
});

const files = ['chat-sft.jsonl', 'chat-sft-from-value.jsonl', 'preference-pairs.jsonl', 'plain-text.jsonl', 'edge-cases.jsonl', 'chat-sft.parquet', 'chat-sft.arrow'];

const fingerprint = (p: string) => `${createHash('sha256').update(readFileSync(p)).digest('hex')} ${statSync(p).mtimeMs}`;

describe('demo shards', () => {
  const before = new Map(files.map((f) => [f, fingerprint(join(demo, f))]));

  afterAll(() => {
    // Read-only, always: checking a shard never changes a byte of it, nor its modification time.
    for (const f of files) expect(fingerprint(join(demo, f)), f).toBe(before.get(f));
  });

  for (const file of files) {
    it(`${file}: findings are exactly the manifest's broken records`, () => {
      const args = [cli, 'check', join(demo, file), '--format', 'json'];
      const glob = Object.keys(schemas).find((g) => globToRegExp(g).test(file));
      if (glob) args.push('--schema', join(demo, schemas[glob]));
      const r = spawnSync(process.execPath, args, { encoding: 'utf8' });
      expect(r.status, r.stderr).toBeLessThan(2);
      const doc = JSON.parse(r.stdout);
      const place = (f: { line: number | null; record: number | null }) => (f.line !== null ? `line ${f.line}` : `row ${f.record}`);
      const got = new Set<string>(doc.files[0].findings.map((f: { line: number | null; record: number | null; rule: string }) => `${place(f)} ${f.rule}`));
      const want = new Set<string>();
      for (const b of manifest.broken.filter((x) => x.file === file)) {
        for (const rule of b.rules) want.add(`${b.line !== undefined ? `line ${b.line}` : `row ${b.row}`} ${rule}`);
      }
      expect([...got].sort()).toEqual([...want].sort());
    });
  }
});
