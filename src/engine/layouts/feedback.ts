// Unpaired feedback: one completion (or conversation) with a boolean `label` saying whether it is
// desirable (common practice of sets for unpaired preference training).

import type { Layout } from './layout.js';
import { readPromptCompletionRecord } from './promptCompletion.js';
import { kindOf } from './sides.js';
import { turnsKey, turnsLayout } from './turns.js';
import { has } from './turnReader.js';

export const feedbackLayout: Layout = {
  id: 'feedback',
  summary: 'Unpaired feedback: a completion or a conversation with a boolean label.',
  rules: [
    { id: 'feedback-label-invalid', family: 'layout', severity: 'error', summary: 'The label of an unpaired-feedback record is not a boolean.' },
  ],

  recognise(record, fields) {
    if (!has(record, 'label') || has(record, 'chosen') || has(record, 'rejected')) return 0;
    if (has(record, 'completion')) return 0.97;
    return turnsKey(record, fields) !== null ? 0.92 : 0;
  },

  read(record, fields) {
    const reading = has(record, 'completion')
      ? readPromptCompletionRecord('feedback', record, fields).build()
      : { ...turnsLayout.read(record, fields), layout: 'feedback' };
    const label = record.label;
    if (typeof label !== 'boolean') {
      reading.issues.push({
        rule: 'feedback-label-invalid',
        message: `"label" is ${kindOf(label)}${typeof label === 'string' || typeof label === 'number' ? ` (${JSON.stringify(label)})` : ''}, not true or false`,
        pointer: '/label',
      });
    }
    return reading;
  },
};
