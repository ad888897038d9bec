// Evaluation items: `question`/`answer`, `problem`/`solution`, or `turns` as a list of user
// prompts (common practice of benchmark files).

import { joinPointer } from '../findings.js';
import type { Layout } from './layout.js';
import { ReadingBuilder } from './sides.js';
import { has } from './turnReader.js';

const PAIRS: readonly [string, string][] = [
  ['question', 'answer'],
  ['problem', 'solution'],
];

export const evalLayout: Layout = {
  id: 'eval',
  summary: 'An evaluation item: question and answer, problem and solution, or turns as a list of prompts.',
  rules: [],

  recognise(record) {
    for (const [q, a] of PAIRS) if (has(record, q) && has(record, a)) return 0.85;
    if (Array.isArray(record.turns) && record.turns.length > 0 && record.turns.every((t) => typeof t === 'string')) return 0.85;
    if (has(record, 'question') || has(record, 'problem')) return 0.4;
    return 0;
  },

  read(record) {
    const b = new ReadingBuilder('eval');
    const seq: number[] = [];
    for (const [q, a] of PAIRS) {
      seq.push(...b.text(joinPointer('', q), record[q], 'prompt'), ...b.text(joinPointer('', a), record[a], 'response'));
    }
    if (Array.isArray(record.turns)) record.turns.forEach((t, i) => seq.push(...b.text(joinPointer('/turns', i), t, 'prompt')));
    b.sequence('item', seq);
    return b.build();
  },
};
