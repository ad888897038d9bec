// The one Finding model shared by every check, source and presenter.

export type Severity = 'error' | 'warning' | 'info';

/** Families group rules for filtering and for the CLI document: an open set, named by the rules that use them. */
export type Family = string;

export interface Finding {
  /** Our own rule id, e.g. `json-syntax`. */
  rule: string;
  family: Family;
  severity: Severity;
  message: string;
  /** 0-based index of the record among the file's records; null when the place holds no record. */
  record: number | null;
  /** 1-based line (text formats); null for columnar rows. */
  line: number | null;
  /** 1-based column in UTF-16 code units of the decoded line (no BOM); null where unknown. */
  column: number | null;
  /** RFC 6901 JSON Pointer into the record, where known. */
  pointer: string | null;
  /** 0-based entry index in the source (line index for JSONL, row for columnar): what the record view pages by. */
  entry: number | null;
  /** Columnar display: row group (Parquet) or batch (Arrow) holding the row, and the row inside it. */
  group?: number;
  rowInGroup?: number;
}

/** What a check reports about a record; the analysis layer fills in where it is. */
export interface RecordIssue {
  rule: string;
  message: string;
  /** Pointer to the offending value inside the record ('' = the whole record). */
  pointer?: string;
  /** Overrides the rule's default severity. */
  severity?: Severity;
}

export interface RuleInfo {
  id: string;
  family: Family;
  severity: Severity;
  /** One line for the README and hovers. */
  summary: string;
}

const SEVERITY_RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2 };

export function worstSeverity(a: Severity | null, b: Severity | null): Severity | null {
  if (a === null) return b;
  if (b === null) return a;
  return SEVERITY_RANK[a] <= SEVERITY_RANK[b] ? a : b;
}

export function compareFindings(a: Finding, b: Finding): number {
  const ea = a.entry ?? -1;
  const eb = b.entry ?? -1;
  if (ea !== eb) return ea - eb;
  return (a.column ?? 0) - (b.column ?? 0);
}

/** RFC 6901: escape one reference token. */
export function pointerToken(key: string | number): string {
  return String(key).replace(/~/g, '~0').replace(/\//g, '~1');
}

export function joinPointer(base: string, key: string | number): string {
  return `${base}/${pointerToken(key)}`;
}

/** RFC 6901: split a pointer into its unescaped reference tokens. */
export function splitPointer(pointer: string): string[] {
  if (pointer === '') return [];
  if (!pointer.startsWith('/')) throw new Error(`not a JSON Pointer: ${pointer}`);
  return pointer
    .slice(1)
    .split('/')
    .map((t) => t.replace(/~1/g, '/').replace(/~0/g, '~'));
}
