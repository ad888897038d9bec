// Preference pairs in the forms the trade uses (common practice, no single standard):
// `prompt` + `chosen` + `rejected` as strings, as lists of turns (with or without a prompt), as
// single turn objects; a prompt as a turn list (`messages`/`conversations`) with string or turn
// answers; `chosen_messages`/`rejected_messages`; and whole `\n\nHuman:`/`\n\nAssistant:`
// transcripts in one string, parsed into turns so that the pair rules run on them.

import type { Layout, LayoutFields, PairSide } from './layout.js';
import { ReadingBuilder, pick, readSide, type SideValue } from './sides.js';
import { turnsKey } from './turns.js';

const CHOSEN = ['chosen', 'chosen_messages'];
const REJECTED = ['rejected', 'rejected_messages'];

function sideOf(name: PairSide['name'], s: SideValue): PairSide {
  return { name, pointer: s.pointer, present: s.present, raw: s.raw, text: s.transcript ? null : s.text, turns: s.turns, transcript: s.transcript };
}

/** Where writers put the prompt of a pair: `prompt`, a turn list, or a question or instruction field. */
const PROMPT_KEYS = ['prompt', 'question', 'instruction', 'query', 'input'];

function promptSide(record: Record<string, unknown>, fields: LayoutFields): SideValue {
  const key = pick(record, ['prompt']) ?? turnsKey(record, fields) ?? pick(record, PROMPT_KEYS) ?? 'prompt';
  return readSide(record, key, fields);
}

/** A side that is a whole conversation carrying its own prompt turns is fed alone, not after the prompt. */
function carriesPrompt(s: SideValue): boolean {
  return s.turns !== null && s.turns.some((t) => t.role === 'user');
}

export const preferenceLayout: Layout = {
  id: 'preference',
  summary: 'A preference pair: a prompt with a chosen and a rejected answer, in any of the common forms.',
  rules: [],

  recognise(record) {
    const c = pick(record, CHOSEN) !== null;
    const r = pick(record, REJECTED) !== null;
    return c && r ? 1 : c || r ? 0.8 : 0;
  },

  read(record, fields) {
    const b = new ReadingBuilder('preference');
    const prompt = promptSide(record, fields);
    const chosen = readSide(record, pick(record, CHOSEN) ?? 'chosen', fields, true);
    const rejected = readSide(record, pick(record, REJECTED) ?? 'rejected', fields, true);
    const p = [...b.text('/system', record.system, 'prompt'), ...b.side(prompt, 'prompt')];
    const c = b.side(chosen, 'response');
    const r = b.side(rejected, 'response');
    const withPrompt = (s: SideValue) => (prompt.turns && s.turns && !carriesPrompt(s) ? [...prompt.turns, ...s.turns] : s.turns ?? undefined);
    b.sequence(carriesPrompt(chosen) ? 'chosen' : 'prompt + chosen', carriesPrompt(chosen) ? c : [...p, ...c], withPrompt(chosen));
    b.sequence(carriesPrompt(rejected) ? 'rejected' : 'prompt + rejected', carriesPrompt(rejected) ? r : [...p, ...r], withPrompt(rejected));
    if (prompt.turns) b.turnLists.push({ name: prompt.pointer.slice(1), pointer: prompt.pointer, raw: prompt.raw, turns: prompt.turns, role: 'prompt' });
    for (const s of [chosen, rejected]) {
      if (s.turns) b.turnLists.push({ name: s.pointer.slice(1), pointer: s.pointer, raw: s.raw, turns: s.turns, role: 'answer' });
    }
    return b.build({ pair: { prompt: sideOf('prompt', prompt), chosen: sideOf('chosen', chosen), rejected: sideOf('rejected', rejected) } });
  },
};
