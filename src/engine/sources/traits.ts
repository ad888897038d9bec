// What each format is, for the code outside sources/: presenters and tools ask these traits, never
// the format's name. A new format is one line here (a test checks every format has its line).

import type { FormatName } from './source.js';

export interface FormatTraits {
  /** Entries are text (lines, or elements of a JSON array) placed at line:column; else rows of a table. */
  textual: boolean;
  /** Each entry is one line of the file, so a record can be written back as that line. */
  oneLinePerEntry: boolean;
  /** What people call the entries: lines (text) or rows (tables). */
  entries: 'lines' | 'rows';
  /** The noun for a group of rows, when the format has groups. */
  group: { one: string; many: string } | null;
  /** The reader holds WebAssembly memory that never shrinks: its worker is replaced past a budget. */
  wasmMemory: boolean;
}

const TRAITS: Record<FormatName, FormatTraits> = {
  jsonl: { textual: true, oneLinePerEntry: true, entries: 'lines', group: null, wasmMemory: false },
  'json-array': { textual: true, oneLinePerEntry: false, entries: 'lines', group: null, wasmMemory: false },
  parquet: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'row group', many: 'row groups' }, wasmMemory: true },
  'arrow-file': { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
  'arrow-stream': { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
};

export function traitsOf(format: FormatName): FormatTraits {
  return TRAITS[format];
}

export const KNOWN_FORMATS = Object.keys(TRAITS) as FormatName[];
