// A model folder's tokenizer and chat template in the worker threads: each worker loads it once,
// the pool and the in-thread analysis give the same shard figures, a record view's reading worker
// renders a record, and a malformed folder stops the analysis with a clear message. The oracle for
// the counts is the reference Rust tokenizer (npm `tokenizers`) on our rendering, which the
// chat-template tests check against Python's jinja2.
import { copyFileSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { EntryOutcome } from '../../../src/engine/analyze';
import { withDefaults } from '../../../src/engine/config';
import { ShardTally } from '../../../src/engine/stats/tally';
import { tokenizerOf } from '../../../src/engine/tokens/tokenizer';
import { analyzeInThread } from '../../../src/node/inThread';
import { analyzeFile } from '../../../src/node/pool';
import { SourceSession } from '../../../src/node/session';
import { buildBundles } from '../helpers/build';
import { modelFolder, referenceTokenizer } from '../engine/tokens/models';

let worker = '';
let dir = '';
let shard = '';
const RECORDS = 300;
const folder = modelFolder('qwen3');

beforeAll(() => {
  worker = join(buildBundles(), 'worker.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-model-workers-'));
  const rows: string[] = [];
  for (let i = 0; i < RECORDS; i++) {
    rows.push(JSON.stringify({ messages: [{ role: 'system', content: 'Repair desk.' }, { role: 'user', content: `Pads squeal on bike ${i}?` }, { role: 'assistant', content: `Sand pad ${i} lightly 🚲.` }] }));
  }
  shard = join(dir, 'chats.jsonl');
  writeFileSync(shard, rows.join('\n') + '\n');
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a model folder in the worker threads', () => {
  it('gives the same rendered and trained totals across two workers and in-thread, equal to the reference counts', async () => {
    const config = withDefaults({ tokenizer: folder, contextLength: 30 });
    const pooled = new ShardTally();
    await analyzeFile(shard, { config, workers: 2, block: 50, workerScript: worker, onOutcomes: (os) => os.forEach((o) => pooled.add(o)) });
    const alone = new ShardTally();
    const outcomes: EntryOutcome[] = [];
    await analyzeInThread(shard, { config, onOutcomes: (os) => os.forEach((o) => (alone.add(o), outcomes.push(o))) });
    const a = pooled.tokenSummary(tokenizerOf(config), config.contextLength);
    const b = alone.tokenSummary(tokenizerOf(config), config.contextLength);
    expect(a).toEqual(b);
    expect(a.tokenizer).toBe(folder);
    expect(a.rendered! > a.total && a.trainable! > 0 && a.trainable! < a.rendered!).toBe(true);
    // Reference: Rust tokenizers on the rendered form, worked out by hand from the template (no tools, no reasoning).
    const ref = referenceTokenizer('qwen3');
    let rendered = 0;
    for (let i = 0; i < RECORDS; i++) {
      const text = `<|im_start|>system\nRepair desk.<|im_end|>\n<|im_start|>user\nPads squeal on bike ${i}?<|im_end|>\n<|im_start|>assistant\n<think>\n\n</think>\n\nSand pad ${i} lightly 🚲.<|im_end|>\n`;
      rendered += (await ref.encode(text, null, { addSpecialTokens: false })).getIds().length;
    }
    expect(a.rendered).toBe(rendered);
    // The context length sits between content and rendered lengths: every record is over only once rendered.
    expect(a.overContext).toBe(RECORDS);
    expect(outcomes.every((o) => o.findings.some((f) => f.rule === 'tokens-rendered-over-context'))).toBe(true);
  }, 120_000);

  it("renders a record in a record view's reading worker", async () => {
    let indexed = false;
    const session = new SourceSession(shard, {}, { onInfo: () => undefined, onProgress: () => undefined, onIndexed: (info) => (indexed = info.complete), onError: (m) => { throw new Error(m); } }, undefined, worker);
    try {
      await session.start();
      while (!indexed) await new Promise((r) => setTimeout(r, 20));
      const [e] = await session.read(0, 1);
      const r = await session.rendered(e!.value, withDefaults({ tokenizer: folder }));
      expect(r!.sequences[0]!.text).toContain('<|im_start|>assistant\n<think>\n\n</think>\n\nSand pad 0 lightly 🚲.<|im_end|>');
      expect(await session.rendered(e!.value, withDefaults())).toBeNull();
    } finally {
      session.dispose();
    }
  }, 120_000);

  it('stops with a clear message when tokenizer.json is malformed', async () => {
    const bad = join(dir, 'bad-model');
    mkdirSync(bad);
    writeFileSync(join(bad, 'tokenizer.json'), '{"model": ');
    copyFileSync(join(folder, 'tokenizer_config.json'), join(bad, 'tokenizer_config.json'));
    const run = analyzeFile(shard, { config: withDefaults({ tokenizer: bad }), workers: 1, workerScript: worker, onOutcomes: () => undefined });
    await expect(run).rejects.toThrow(/bad-model.*tokenizer\.json is not valid JSON/);
  }, 120_000);
});
