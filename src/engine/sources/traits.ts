// What each format is, for the code outside sources/: presenters and tools ask these traits, never
// the format's name.

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

// Each format declares its traits on its line of FORMATS (formats/*.ts, listed in formats.ts); these re-exports keep one way to ask.
export { KNOWN_FORMATS, traitsOf } from './index.js';
