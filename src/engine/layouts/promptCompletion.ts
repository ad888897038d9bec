// Prompt and completion: both strings, both lists of turns (the conversational form), or a
// turn-list prompt with a string completion (common practice of supervised fine-tuning sets).

import type { Layout, LayoutFields, Reading } from './layout.js';
import { ReadingBuilder, readSide, type SideValue } from './sides.js';
import { has } from './turnReader.js';

/** Reads a prompt side and a completion side into `b`: shared with the unpaired-feedback layout. */
export function readPromptCompletion(b: ReadingBuilder, prompt: SideValue, completion: SideValue): void {
  const seq = [...b.side(prompt, 'prompt'), ...b.side(completion, 'response')];
  const turns = prompt.turns && completion.turns ? [...prompt.turns, ...completion.turns] : undefined;
  b.sequence('prompt + completion', seq, turns);
  if (prompt.turns) b.turnLists.push({ name: 'prompt', pointer: prompt.pointer, raw: prompt.raw, turns: prompt.turns, role: 'prompt' });
  if (completion.turns) {
    b.turnLists.push({ name: 'completion', pointer: completion.pointer, raw: completion.raw, turns: completion.turns, role: 'answer' });
  }
}

export function readPromptCompletionRecord(layout: string, record: Record<string, unknown>, fields: LayoutFields): ReadingBuilder {
  const b = new ReadingBuilder(layout);
  readPromptCompletion(b, readSide(record, 'prompt', fields), readSide(record, 'completion', fields));
  return b;
}

export const promptCompletionLayout: Layout = {
  id: 'prompt-completion',
  summary: 'A prompt and its completion: strings, lists of turns, or a turn-list prompt with a string completion.',
  rules: [],

  recognise(record) {
    return has(record, 'prompt') && has(record, 'completion') ? 0.95 : 0;
  },

  read(record, fields): Reading {
    return readPromptCompletionRecord('prompt-completion', record, fields).build();
  },
};
