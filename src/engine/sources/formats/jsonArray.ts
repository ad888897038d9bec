// One JSON array of records (RFC 8259), plain or wrapped in gzip or zstd: each element an entry.

import type { FormatEntry } from '../format.js';
import { JsonArraySource } from '../jsonArray.js';

export const jsonArrayFormat: FormatEntry = {
  format: 'json-array',
  title: 'a JSON array',
  traits: { textual: true, oneLinePerEntry: false, entries: 'lines', group: null, wasmMemory: false },
  endings: ['.json', '.json.gz', '.json.zst'],
  jsonText: 'array',
  create: (p, o, compression) => new JsonArraySource(p, { maxElementBytes: o.maxLineBytes, compression }),
};
