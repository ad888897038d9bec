// What kind of shard this is, judged from its first records: decides the 'auto' settings.

import type { CheckConfig } from '../config.js';
import { extractConversation, isPairRecord } from '../checks/conversation.js';
import type { RecordSource } from '../sources/source.js';

export const SHAPE_SAMPLE = 200;

/** Share of sampled object records that must hold a conversation for the shard to count as chat. */
const CHAT_SHARE = 0.8;

export async function isChatShard(source: RecordSource, config: CheckConfig, signal?: AbortSignal): Promise<boolean> {
  let objects = 0;
  let chats = 0;
  for await (const e of source.scan({ to: SHAPE_SAMPLE, signal })) {
    if (e.entry >= SHAPE_SAMPLE) break;
    const v = e.value;
    if (!v || typeof v !== 'object' || Array.isArray(v) || isPairRecord(v)) continue;
    objects++;
    if (extractConversation(v, config) !== null) chats++;
  }
  return objects > 0 && chats / objects >= CHAT_SHARE;
}

/** Settles every 'auto' choice of the configuration for this shard. */
export async function settleConfig(source: RecordSource, config: CheckConfig, signal?: AbortSignal): Promise<CheckConfig> {
  if (config.chat.requireConversation !== 'auto') return config;
  const chat = await isChatShard(source, config, signal);
  return { ...config, chat: { ...config.chat, requireConversation: chat } };
}
