// Turn lists: a conversation under `messages`, `conversations`, `conversation` or `dialog`, its turns
// written `role`/`content` or `from`/`value` (common practice of chat SFT sets), with an optional
// `system` string and a `tools` list of definitions beside it (definitions are not content).

import { joinPointer } from '../findings.js';
import type { Layout, LayoutFields } from './layout.js';
import { ReadingBuilder, pick, recordMedia } from './sides.js';
import { has, readTurns } from './turnReader.js';

export const TURN_KEYS = ['messages', 'conversations', 'conversation', 'dialog', 'dialogue'];

/** The key holding the conversation: the user's mapped names first, then the common ones. */
export function turnsKey(record: Record<string, unknown>, fields: LayoutFields): string | null {
  return pick(record, [...(fields.turns ?? []), ...TURN_KEYS]);
}

export const turnsLayout: Layout = {
  id: 'turns',
  summary: 'A conversation: a list of turns under messages, conversations, conversation or dialog.',
  rules: [],

  recognise(record, fields) {
    const key = turnsKey(record, fields);
    if (key === null) return 0;
    // A list is certain; a misshapen value still means the writer meant a conversation.
    return Array.isArray(record[key]) ? 0.9 : 0.5;
  },

  read(record, fields) {
    const b = new ReadingBuilder('turns');
    const key = turnsKey(record, fields) ?? 'messages';
    const pointer = joinPointer('', key);
    const raw = record[key];
    const turns = Array.isArray(raw) ? readTurns(raw, pointer, fields) : [];
    const seq = [...b.text('/system', typeof record.system === 'string' ? record.system : undefined, 'prompt'), ...b.turns(turns)];
    b.sequence(key, seq, turns);
    b.turnLists.push({ name: key, pointer, raw, turns, role: 'example' });
    return b.build({ media: recordMedia(record), ...(has(record, 'tools') ? { toolsPointer: '/tools' } : {}) });
  },
};
