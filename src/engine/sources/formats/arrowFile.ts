// The Arrow IPC file format (Feather v2): `ARROW1` and 2 bytes of padding at the start, `ARROW1` at
// the end (Arrow columnar format specification, "IPC File Format").

import { ArrowFileSource } from '../arrowFile.js';
import { bytesAt, type FormatEntry } from '../format.js';

export const arrowFileFormat: FormatEntry = {
  format: 'arrow-file',
  title: 'an Arrow IPC file',
  endings: ['.arrow', '.feather'],
  traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
  signs: {
    start: (p) => bytesAt(p.head, 'ARROW1'),
    // A damaged start with an intact end: the reader names what is wrong with the start.
    intactEnd: (p) => p.size >= 12 && bytesAt(p.tail, 'ARROW1', p.tail.length - 6),
  },
  create: (p, o) => new ArrowFileSource(p, { maxBatchBytes: o.maxReaderBytes }),
};
