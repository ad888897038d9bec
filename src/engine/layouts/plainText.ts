// Plain text for pre-training: the first configured text field holding a string (`text`,
// `content` … by default), else every top-level string of the record.

import { joinPointer } from '../findings.js';
import type { Layout } from './layout.js';
import { ReadingBuilder } from './sides.js';
import { has } from './turnReader.js';

/** The text fields looked for in order when the configuration names none. */
export const DEFAULT_TEXT_FIELDS = ['text', 'content', 'document', 'body', 'passage'];

export const plainTextLayout: Layout = {
    id: 'text',
    summary: 'Plain text for pre-training: a text field (text, content, document …), else every top-level string.',
    rules: [],

    recognise(record, fields) {
      for (const f of fields.text ?? DEFAULT_TEXT_FIELDS) if (has(record, f) && typeof record[f] === 'string') return 0.5;
      return Object.values(record).some((v) => typeof v === 'string') ? 0.1 : 0;
    },

    read(record, fields) {
      const b = new ReadingBuilder('text');
      for (const f of fields.text ?? DEFAULT_TEXT_FIELDS) {
        if (has(record, f) && typeof record[f] === 'string') {
          b.text(joinPointer('', f), record[f], 'response');
          return b.build();
        }
      }
      for (const [key, v] of Object.entries(record)) b.text(joinPointer('', key), v, 'response');
      return b.build();
    },
};
