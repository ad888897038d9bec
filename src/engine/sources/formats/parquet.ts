// Apache Parquet: magic `PAR1` at both ends (`PARE` for an encrypted footer), per the format's
// specification (apache/parquet-format).

import { bytesAt, type FormatEntry } from '../format.js';
import { ParquetSource } from '../parquet.js';

const magic = (b: Uint8Array, at = 0) => bytesAt(b, 'PAR1', at) || bytesAt(b, 'PARE', at);

export const parquetFormat: FormatEntry = {
  format: 'parquet',
  title: 'Parquet',
  endings: ['.parquet'],
  traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'row group', many: 'row groups' }, wasmMemory: true },
  signs: {
    start: (p) => magic(p.head),
    // A damaged start with an intact end: the reader names what is wrong with the start.
    intactEnd: (p) => p.size >= 12 && magic(p.tail, p.tail.length - 4),
  },
  create: (p, o) => new ParquetSource(p, { maxDecodedBytes: o.maxReaderBytes }),
};
