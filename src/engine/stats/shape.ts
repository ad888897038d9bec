// What kind of shard this is, judged from its first records: settles the shard's layout and the
// 'auto' settings that follow from it.

import type { CheckConfig } from '../config.js';
import { decideLayout } from '../layouts/index.js';
import type { RecordSource } from '../sources/source.js';

export const SHAPE_SAMPLE = 200;

/** Share of sampled records that must be conversations for the shard to count as a chat shard. */
const CHAT_SHARE = 0.8;

/** The shard's layout and the share of its first records that fit it best. */
export async function sampleLayout(source: RecordSource, config: CheckConfig, signal?: AbortSignal): Promise<{ id: string; share: number } | null> {
  const values: unknown[] = [];
  for await (const e of source.scan({ to: SHAPE_SAMPLE, signal })) {
    if (e.entry >= SHAPE_SAMPLE) break;
    if (e.value !== undefined) values.push(e.value);
  }
  return decideLayout(values, config);
}

/** The folder of a path, by string (the engine does not import node:path). */
function folderOf(path: string): string {
  const i = Math.max(path.lastIndexOf('/'), path.lastIndexOf('\\'));
  return i <= 0 ? (i === 0 ? '/' : '.') : path.slice(0, i);
}

/** Settles the shard's layout and every 'auto' choice of the configuration for this shard. */
export async function settleConfig(source: RecordSource, config: CheckConfig, signal?: AbortSignal): Promise<CheckConfig> {
  const decided = config.layout.id === 'auto' ? await sampleLayout(source, config, signal) : { id: config.layout.id, share: 1 };
  const layout = decided?.id ?? null;
  const chat = config.chat.requireConversation === 'auto' ? layout === 'turns' && (decided?.share ?? 0) >= CHAT_SHARE : config.chat.requireConversation;
  return { ...config, shardLayout: layout, baseDir: config.baseDir ?? folderOf(source.path), chat: { ...config.chat, requireConversation: chat } };
}
