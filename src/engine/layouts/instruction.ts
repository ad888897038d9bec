// Instruction records: `instruction`, an optional `input`, the `output` (common practice of
// instruction-tuning sets; `context`/`response` are the same roles under other writers' names),
// with an optional `system` string and `history` as earlier [instruction, output] pairs.

import { joinPointer } from '../findings.js';
import type { Layout } from './layout.js';
import { ReadingBuilder, kindOf, pick } from './sides.js';
import { has } from './turnReader.js';

const INPUT_KEYS = ['input', 'context'];
const OUTPUT_KEYS = ['output', 'response'];

export const instructionLayout: Layout = {
  id: 'instruction',
  summary: 'An instruction record: instruction, optional input, output (optional system and history).',
  rules: [
    { id: 'instruction-output-missing', family: 'layout', severity: 'error', summary: 'An instruction record has no output, or an empty one.' },
  ],

  recognise(record) {
    if (!has(record, 'instruction')) return 0;
    return pick(record, OUTPUT_KEYS) !== null || pick(record, INPUT_KEYS) !== null ? 0.9 : 0.6;
  },

  read(record) {
    const b = new ReadingBuilder('instruction');
    const seq: number[] = [];
    seq.push(...b.text('/system', record.system, 'prompt'));
    if (Array.isArray(record.history)) {
      record.history.forEach((pair, i) => {
        if (!Array.isArray(pair)) return;
        const p = joinPointer('/history', i);
        seq.push(...b.text(joinPointer(p, 0), pair[0], 'prompt'), ...b.text(joinPointer(p, 1), pair[1], 'response'));
      });
    }
    seq.push(...b.text('/instruction', record.instruction, 'prompt'));
    const inputKey = pick(record, INPUT_KEYS);
    if (inputKey) seq.push(...b.text(joinPointer('', inputKey), record[inputKey], 'prompt'));
    const outputKey = pick(record, OUTPUT_KEYS);
    if (outputKey === null) {
      b.issues.push({ rule: 'instruction-output-missing', message: 'instruction record has no "output"', pointer: '' });
    } else {
      const out = record[outputKey];
      const pointer = joinPointer('', outputKey);
      if (typeof out !== 'string') {
        b.issues.push({ rule: 'instruction-output-missing', message: `"${outputKey}" is ${kindOf(out)}, not text`, pointer });
      } else if (out.trim() === '') {
        b.issues.push({ rule: 'instruction-output-missing', message: out === '' ? `"${outputKey}" is empty` : `"${outputKey}" holds only white space`, pointer });
      }
      seq.push(...b.text(pointer, out, 'response'));
    }
    b.sequence('instruction + output', seq);
    return b.build();
  },
};
