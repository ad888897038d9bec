// Results kept between sessions: a tally survives the round trip exactly; the key changes with the
// file's bytes and with the settings; the store stays under its bound, least recently used first.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { withDefaults } from '../../../src/engine/config';
import { ShardTally } from '../../../src/engine/stats/tally';
import { ResultsStore } from '../../../src/host/resultsStore';

const dir = mkdtempSync(join(tmpdir(), 'shardwise-kept-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function tally(): ShardTally {
  const t = new ShardTally();
  for (let i = 0; i < 50; i++) {
    t.add({ entry: i, record: i, tokens: 10 + i, length: 10 + i, prompt: 3, response: 7 + i, layout: 'turns', kind: 'record', findings: i % 7 === 0 ? [{ rule: 'chat-role-repeated', family: 'chat', severity: 'warning', message: 'm', record: i, line: i + 1, column: 3, pointer: '/messages/1', entry: i }] : [] });
  }
  t.add({ entry: 50, record: null, tokens: null, kind: 'blank', findings: [] });
  return t;
}

describe('the results store', () => {
  it('a tally survives a snapshot through JSON exactly', () => {
    const t = tally();
    const back = ShardTally.restore(JSON.parse(JSON.stringify(t.snapshot())));
    expect(back.snapshot()).toEqual(t.snapshot());
    expect(back.tokenSummary('cl100k_base', 40)).toEqual(t.tokenSummary('cl100k_base', 40));
    expect(back.layout()).toEqual(t.layout());
  });
  it('keys change with the bytes and with the settings', async () => {
    const f = join(dir, 'a.jsonl');
    writeFileSync(f, '{"text": "spoke"}\n');
    const k1 = await ResultsStore.keyFor(f, withDefaults());
    expect(await ResultsStore.keyFor(f, withDefaults())).toBe(k1);
    expect(await ResultsStore.keyFor(f, withDefaults({ contextLength: 100 }))).not.toBe(k1);
    writeFileSync(f, '{"text": "spokes"}\n');
    expect(await ResultsStore.keyFor(f, withDefaults())).not.toBe(k1);
    expect(await ResultsStore.keyFor(join(dir, 'missing.jsonl'), withDefaults())).toBeNull();
  });
  it('gives back what was put under the same key only, and drops the least recently used past its bound', async () => {
    const snap = tally().snapshot();
    const size = JSON.stringify({ key: 'x', tally: snap, recordEntry: [] }).length;
    // Room for three results and a half.
    const store = new ResultsStore(join(dir, 'store'), Math.floor(size * 3.5));
    await store.put({ key: 'one', tally: snap, recordEntry: [0, 1, 2] });
    expect((await store.get('one'))?.recordEntry).toEqual([0, 1, 2]);
    expect(await store.get('two')).toBeNull();
    // Fill past the bound: the oldest goes first.
    for (const k of ['b', 'c', 'd', 'e', 'f']) {
      await store.put({ key: k, tally: snap, recordEntry: [] });
      await new Promise((r) => setTimeout(r, 5));
    }
    expect(await store.get('one')).toBeNull();
    expect(await store.get('b')).toBeNull();
    for (const k of ['d', 'e', 'f']) expect(await store.get(k), k).not.toBeNull();
  });
});
