// Places, as people write and read them. One convention everywhere a person sees or types a
// place: record 1 is the first record, row 1 the first row, line 1 the first line. Inside the
// engine, `record` and `entry` are 0-based indexes (and so is the JSON report's `record` field,
// as documented); this module is where the two meet. The palette, the record view's box and the
// CLI parse with `parsePlace`; every presenter formats with `formatPlace` and `formatRecord`.

export type PlaceKind = 'record' | 'line' | 'row';

/** A place as typed: `value` is the 1-based number the person wrote. */
export interface PlaceTarget {
  kind: PlaceKind;
  value: number;
}

export const PLACE_HINT = 'Type a record number (12 or #12), a line (line 40 or L40) or a row (row 7); all count from 1.';

/** `12`, `#12`, `record 12` → record 12; `line 40`, `L40`, `:40` → line 40; `row 7`, `r7` → row 7. */
export function parsePlace(text: string): PlaceTarget | null {
  const t = text.trim().toLowerCase();
  const m = /^(?:(#|record\s*|rec\s*)|(line\s*|l\s*|:)|(row\s*|r\s*))?(\d{1,15})$/.exec(t);
  if (!m) return null;
  const value = Number(m[4]);
  if (!Number.isSafeInteger(value) || value < 1) return null;
  return { kind: m[2] !== undefined ? 'line' : m[3] !== undefined ? 'row' : 'record', value };
}

/** What a target names, as 0-based indexes: a record index, an entry index (rows), or a 1-based line. */
export function targetIndex(t: PlaceTarget): { record: number } | { entry: number } | { line: number } {
  if (t.kind === 'record') return { record: t.value - 1 };
  if (t.kind === 'row') return { entry: t.value - 1 };
  return { line: t.value };
}

/** `#12` for the record at index 11. */
export function formatRecord(recordIndex: number): string {
  return `#${(recordIndex + 1).toLocaleString('en-US')}`;
}

export interface PlaceParts {
  line: number | null;
  column?: number | null;
  /** 0-based entry (the row of a columnar file). */
  entry: number | null;
  /** 0-based record index. */
  record?: number | null;
}

/**
 * A finding's or an entry's place as people read it: `12:5` (line and column) or `12` for text
 * formats, `row 8` (1-based) for a row, `file` when it has none. Places are identifiers: no
 * thousands separators, so they can be searched for as written.
 */
export function formatPlace(p: PlaceParts): string {
  if (p.line !== null) return p.column !== null && p.column !== undefined ? `${p.line}:${p.column}` : `${p.line}`;
  if (p.entry !== null) return `row ${p.entry + 1}`;
  if (p.record !== null && p.record !== undefined) return `row ${p.record + 1}`;
  return 'file';
}

/** The 1-based row a person reads for a 0-based entry. */
export function rowNumber(entry: number): number {
  return entry + 1;
}
