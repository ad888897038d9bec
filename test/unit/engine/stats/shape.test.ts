// The automatic chat-shard decision: with chat.requireConversation 'auto', a shard is a chat shard
// (records without a conversation are reported) when its first records are read best as turns by
// at least CHAT_SHARE (0.8) of them. Records are built here and read through the real JSONL source.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { withDefaults, type CheckConfig } from '../../../../src/engine/config.js';
import { SHAPE_SAMPLE, sampleLayout, settleConfig } from '../../../../src/engine/stats/shape.js';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';

let dir: string;
let n = 0;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-shape-'));
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
});

const chat = (i: number) => ({ messages: [{ role: 'user', content: `Why does my chain skip (${i})?` }, { role: 'assistant', content: 'Check the hanger alignment.' }] });
const text = (i: number) => ({ text: `Shop notes ${i}: trued a wheel, replaced a tube.` });
const pair = (i: number) => ({ prompt: `Torque for stem bolts (${i})?`, chosen: 'The value printed on the stem.', rejected: 'As tight as possible.' });

/** Settles a shard of the given records (one JSON value per line) under the given configuration. */
async function settle(values: unknown[], config: CheckConfig = withDefaults()): Promise<CheckConfig> {
  const path = join(dir, `shard-${n++}.jsonl`);
  writeFileSync(path, values.map((v) => JSON.stringify(v)).join('\n') + '\n');
  const source = new JsonlSource(path);
  try {
    await source.open();
    return await settleConfig(source, config);
  } finally {
    await source.close();
  }
}

/** `chats` conversations and `others` other records, the others spread evenly so that order plays no part. */
function mix(chats: number, others: number, other: (i: number) => unknown = text): unknown[] {
  const total = chats + others;
  return Array.from({ length: total }, (_, i) => (Math.floor(((i + 1) * others) / total) > Math.floor((i * others) / total) ? other(i) : chat(i)));
}

describe('settleConfig: the automatic chat-shard decision', () => {
  it('builds the mixes it asks for', () => {
    const m = mix(7, 3);
    expect(m).toHaveLength(10);
    expect(m.filter((v) => 'messages' in (v as object))).toHaveLength(7);
  });

  it('is a chat shard at exactly the share 0.8 of conversations (8 of 10), not at 0.7 (7 of 10)', async () => {
    const at = await settle(mix(8, 2));
    expect(at.shardLayout).toBe('turns');
    expect(at.chat.requireConversation).toBe(true);
    const below = await settle(mix(7, 3));
    // The shard is still read as turns (the layout most records fit), but it is not a chat shard.
    expect(below.shardLayout).toBe('turns');
    expect(below.chat.requireConversation).toBe(false);
  });

  it('decides at the boundary in a full sample: 160 of 200 is a chat shard, 159 of 200 is not', async () => {
    const at = await settle(mix(160, 40));
    expect(at.chat.requireConversation).toBe(true);
    const below = await settle(mix(159, 41));
    expect(below.chat.requireConversation).toBe(false);
  });

  it('is a chat shard when every record is a conversation', async () => {
    const all = await settle(Array.from({ length: 5 }, (_, i) => chat(i)));
    expect(all).toMatchObject({ shardLayout: 'turns', chat: { requireConversation: true } });
  });

  it('is no chat shard when the shard is not read as turns, whatever its share', async () => {
    const texts = await settle(Array.from({ length: 10 }, (_, i) => text(i)));
    expect(texts.shardLayout).toBe('text');
    expect(texts.chat.requireConversation).toBe(false);
    const pairs = await settle(Array.from({ length: 10 }, (_, i) => pair(i)));
    expect(pairs.shardLayout).toBe('preference');
    expect(pairs.chat.requireConversation).toBe(false);
    // Conversations in the minority: the shard is read as pairs, not as a chat shard.
    const fewChats = await settle(mix(4, 6, pair));
    expect(fewChats.shardLayout).toBe('preference');
    expect(fewChats.chat.requireConversation).toBe(false);
  });

  it('is no chat shard when no record is an object', async () => {
    const none = await settle(['plain', 42, [1, 2]]);
    expect(none.shardLayout).toBeNull();
    expect(none.chat.requireConversation).toBe(false);
  });

  it('judges only the first SHAPE_SAMPLE records', async () => {
    const chatsFirst = [...Array.from({ length: SHAPE_SAMPLE }, (_, i) => chat(i)), ...Array.from({ length: 3 * SHAPE_SAMPLE }, (_, i) => text(i))];
    expect((await settle(chatsFirst)).chat.requireConversation).toBe(true);
    const textsFirst = [...Array.from({ length: SHAPE_SAMPLE }, (_, i) => text(i)), ...Array.from({ length: 3 * SHAPE_SAMPLE }, (_, i) => chat(i))];
    expect((await settle(textsFirst)).chat.requireConversation).toBe(false);
  });

  it('keeps a set choice: always and never are not decided by the records', async () => {
    const texts = Array.from({ length: 10 }, (_, i) => text(i));
    const chats = Array.from({ length: 10 }, (_, i) => chat(i));
    const always = withDefaults();
    always.chat = { ...always.chat, requireConversation: true };
    expect((await settle(texts, always)).chat.requireConversation).toBe(true);
    const never = withDefaults();
    never.chat = { ...never.chat, requireConversation: false };
    expect((await settle(chats, never)).chat.requireConversation).toBe(false);
  });

  it('takes a set layout as the whole shard: a layout set to turns makes an auto chat shard', async () => {
    const config = withDefaults();
    config.layout = { ...config.layout, id: 'turns' };
    const settled = await settle(Array.from({ length: 10 }, (_, i) => text(i)), config);
    expect(settled.shardLayout).toBe('turns');
    expect(settled.chat.requireConversation).toBe(true);
  });

  it('reports the share it decides by', async () => {
    const path = join(dir, `shard-${n++}.jsonl`);
    writeFileSync(path, mix(8, 2).map((v) => JSON.stringify(v)).join('\n') + '\n');
    const source = new JsonlSource(path);
    try {
      await source.open();
      expect(await sampleLayout(source, withDefaults())).toEqual({ id: 'turns', share: 0.8 });
    } finally {
      await source.close();
    }
  });
});
