// The typed messages between the extension host and the webviews: the one contract between them.
// Both sides import only types from here (plus the tiny guards at the end).

import type { Finding, Severity } from './engine/findings.js';
import type { ColumnInfo, FormatName, GroupInfo } from './engine/sources/source.js';

export type { TokenSummary } from './engine/stats/tally.js';
import type { TokenSummary } from './engine/stats/tally.js';

export interface ShardSummary {
  path: string;
  fileName: string;
  format: FormatName;
  sizeBytes: number;
  /** Entries (lines or rows) known so far. */
  entries: number;
  records: number;
  blankLines: number;
  invalidLines: number;
  tokens: TokenSummary;
  /** The layout that reads the shard's records, and the share of records it read; null before any record. */
  layout: { id: string; share: number } | null;
  findingsBySeverity: Record<Severity, number>;
  /** 'indexing' → 'analysing' → 'done' (or 'failed' / 'cancelled'). */
  phase: 'indexing' | 'analysing' | 'done' | 'failed' | 'cancelled';
  /** 0..1 */
  progress: number;
  /** A clear message when the phase is 'failed'. */
  error?: string;
}

/** One table row of the record view: everything is already cut and stringified by the host. */
export interface RowView {
  entry: number;
  record: number | null;
  /** `12` for a line, `row 5` for a columnar row. */
  place: string;
  line: number | null;
  tokens: number | null;
  severity: Severity | null;
  findingCount: number;
  /** Top-level field → a short preview string (cut). */
  cells: Record<string, string>;
  /** For entries without a record (blank / invalid lines): a short preview of the raw text. */
  raw?: string;
}

export interface TurnView {
  index: number;
  role: string;
  content: string;
  tokens: number | null;
  pointer: string;
}

export interface FindingView extends Finding {
  /** Stable id within the current analysis, used to ask the host to act on it. */
  id: number;
  /** `12:5` for text formats, `row 5` for columnar ones. */
  place: string;
}

export interface DetailView {
  entry: number;
  record: number | null;
  place: string;
  /**
   * The record value for the JSON tree (long strings already cut by the host, each cut string ending
   * in an ellipsis and counted in `truncated`); undefined when the entry holds no record.
   */
  value?: unknown;
  /** The raw text of the entry (cut), shown when it holds no record (blank / invalid line). */
  raw?: string;
  /** True when the host cut anything from `value` or `raw`. */
  truncated: boolean;
  /** The conversation, for chat records. */
  turns?: TurnView[];
  /** Preference pair sides, when the record is one. */
  pair?: { prompt: string; chosen: string; rejected: string };
  tokens: number | null;
  findings: FindingView[];
  /** The pointer to reveal (scroll to and highlight), when the selection came from a finding. */
  reveal?: string;
}

// ---- record view ----

export type HostToRecordView =
  | {
      type: 'init';
      fileName: string;
      format: FormatName;
      sizeBytes: number;
      columns: ColumnInfo[];
      groups?: GroupInfo[];
      facts?: Record<string, string>;
      entries: number;
      complete: boolean;
    }
  | { type: 'entries'; entries: number; complete: boolean; progress: number }
  | { type: 'rows'; requestId: number; start: number; rows: RowView[] }
  | { type: 'detail'; detail: DetailView }
  | { type: 'select'; entry: number; pointer?: string }
  | { type: 'columns'; columns: ColumnInfo[] }
  /** Token counts or findings changed: re-request the rows on screen without blanking them. */
  | { type: 'refresh' }
  | { type: 'error'; message: string };

export type RecordViewToHost =
  | { type: 'ready' }
  | { type: 'requestRows'; requestId: number; start: number; count: number }
  | { type: 'requestDetail'; entry: number; reveal?: string }
  | { type: 'goto'; kind: 'record' | 'line' | 'entry'; value: number }
  | { type: 'openText'; entry: number; pointer?: string }
  | { type: 'selected'; entry: number };

// ---- side panel ----

export type HostToPanel =
  | { type: 'empty'; message: string }
  | {
      type: 'state';
      summary: ShardSummary;
      findings: FindingView[];
      /** Findings known in all; `findings` may be capped. */
      totalFindings: number;
    };

export type PanelToHost =
  | { type: 'ready' }
  | { type: 'reveal'; id: number }
  | { type: 'openText'; id: number };

export function isMessage(x: unknown): x is { type: string } {
  return typeof x === 'object' && x !== null && typeof (x as { type?: unknown }).type === 'string';
}
