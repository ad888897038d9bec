// The typed messages between the extension host and the webviews: the one contract between them.
// Both sides import only types from here (plus the tiny guards at the end).

import type { Finding, Severity } from './engine/findings.js';
import type { ColumnInfo, FormatName, GroupInfo } from './engine/sources/source.js';

export type { TokenSummary } from './engine/stats/tally.js';
// The engine's types the webviews need, re-exported: the webviews import only from this file.
export type { Severity } from './engine/findings.js';
export type { ColumnInfo, FormatName, GroupInfo } from './engine/sources/source.js';
export type { FormatTraits } from './engine/sources/traits.js';
import type { FormatTraits } from './engine/sources/traits.js';
export type { FilterSpec, SearchSpec, SortSpec, ViewQuery } from './engine/query.js';
import type { ViewQuery } from './engine/query.js';
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
  /** The tokenizer's short name (an encoding, or a model folder's name); `tokens.tokenizer` is its full name. */
  tokenizerLabel?: string;
  /** The layout that reads the shard's records, and the share of records it read; null before any record. */
  layout: { id: string; share: number } | null;
  findingsBySeverity: Record<Severity, number>;
  /** Every finding counted by rule (the list itself may be capped). */
  findingsByRule?: Record<string, number>;
  /** 'indexing' → 'analysing' → 'done' (or 'failed' / 'cancelled'). */
  phase: 'indexing' | 'analysing' | 'done' | 'failed' | 'cancelled';
  /** 0..1: the share of the file checked. */
  progress: number;
  /** The progress in words (engine/progress.ts): both phases, with "so far" until final. */
  progressText?: string;
  /** 0..1: the share of the file indexed (1 once the index is complete). */
  indexed?: number;
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

/** One part of a turn, already cut and stringified by the host. */
export type PartView =
  | { kind: 'text'; text: string; pointer: string }
  | { kind: 'reasoning'; text: string; pointer: string }
  | {
      kind: 'tool-call';
      name: string;
      /** The arguments pretty-printed when they are JSON, else as written. */
      arguments: string;
      /** The call's id, when it has one. */
      id: string | null;
      pointer: string;
    }
  | {
      kind: 'media';
      media: 'image' | 'audio' | 'video' | 'file';
      /** What to show in place of the media: its location, or why it is not shown. */
      chip: string;
      /** True when the record holds the bytes (not a path or URL). */
      inline: boolean;
      /** A `data:image/(png|jpeg|gif|webp);base64,` thumbnail, only for small inline images. */
      src?: string;
      pointer: string;
    }
  | { kind: 'unknown'; type: string; pointer: string };

export interface TurnView {
  index: number;
  role: string;
  content: string;
  tokens: number | null;
  pointer: string;
  /** Every part of the turn, when it holds more than one plain text. */
  parts?: PartView[];
  /** For a tool turn: the call it answers, and that call's function name when an earlier turn makes it. */
  answers?: { id: string; name: string | null };
  /** False when the record excludes the turn from the loss; null or absent when it does not say. */
  trainable?: boolean | null;
}

/** One side of a preference pair in the detail pane. */
export interface PairSideView {
  name: 'prompt' | 'chosen' | 'rejected';
  pointer: string;
  /** Present in the record at all. */
  present: boolean;
  /** Plain text (cut), for a string side; null for a turn side. */
  text: string | null;
  /** The side's turns, for a turn side (a list, one turn object, or a parsed transcript). */
  turns: TurnView[] | null;
  /** True when the turns were parsed out of a transcript string. */
  transcript: boolean;
  tokens: number | null;
}

export interface PairView {
  prompt: PairSideView;
  chosen: PairSideView;
  rejected: PairSideView;
  /**
   * For turn sides that carry their own prompt turns: the index of the first prompt turn where
   * chosen and rejected differ, or null when their prompts agree (or the sides are plain text).
   */
  promptDiffers: number | null;
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
  pair?: PairView;
  /** Media the record lists beside its turns. */
  media?: PartView[];
  /** Pointer to the tool definitions the record offers, when it has them. */
  toolsPointer?: string;
  /** The layout the host read the record with. */
  layout?: string;
  tokens: number | null;
  findings: FindingView[];
  /** The pointer to reveal (scroll to and highlight), when the selection came from a finding. */
  reveal?: string;
  /** With a model's chat template: each sequence as the model sees it, and what the loss covers. */
  rendered?: RenderedView[];
}

/** One sequence rendered with the chat template, for the detail pane. */
export interface RenderedView {
  name: string;
  /** The rendered text (cut like other long values), or empty when the template raised an error. */
  text: string;
  /** True when `text` was cut. */
  cut: boolean;
  /** Trained spans of `text`, as UTF-16 offsets (clipped to the cut text). */
  spans: { start: number; end: number }[];
  rendered: number;
  content: number;
  trainable: number;
  error: string | null;
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
      /** What the format is, so the view never compares format names. */
      traits: FormatTraits;
    }
  | { type: 'entries'; entries: number; complete: boolean; progress: number }
  | { type: 'rows'; requestId: number; start: number; rows: RowView[] }
  | { type: 'detail'; detail: DetailView }
  | { type: 'select'; entry: number; pointer?: string }
  | { type: 'columns'; columns: ColumnInfo[] }
  /**
   * The layout that reads the shard's records (null before any record is read), the share of the
   * records it read so far, and whether a setting or the project file chose it.
   */
  | { type: 'layout'; id: string | null; share: number; chosen: boolean }
  /** Token counts or findings changed: re-request the rows on screen without blanking them. */
  | { type: 'refresh' }
  | { type: 'error'; message: string }
  /** A one-line note above the table (Restricted Mode holding settings back), with an action the host runs. */
  | { type: 'notice'; message: string; action?: { label: string; id: 'manageTrust' } }
  /**
   * The view's search, sort or filter: `active` false shows the whole shard in file order. While
   * the worker searches, `searching` is its share done (0..1); `error` says why a query cannot run.
   * With a view on, every position the view and the host exchange is a position in the view.
   */
  | { type: 'view'; active: boolean; count: number; total: number; label: string; query: ViewQuery | null; searching?: number; error?: string }
  /** The typed place is not one, or not in the shard: shown beside the box. */
  | { type: 'gotoInvalid'; message: string };

export type RecordViewToHost =
  | { type: 'ready' }
  | { type: 'requestRows'; requestId: number; start: number; count: number }
  | { type: 'requestDetail'; entry: number; reveal?: string }
  /** A place as the person typed it (`12`, `line 40`, `row 7`): the host parses it, as it does the palette's. */
  | { type: 'goto'; text: string }
  /** Search, sort or filter the whole shard (null: back to the file's order). */
  | { type: 'query'; query: ViewQuery | null }
  /** F8 / Shift+F8: the next or previous record with a finding after position `from`. */
  | { type: 'step'; direction: 1 | -1; from: number }
  /** Filter by a rule picked from the shard's rules (the host shows the pick). */
  | { type: 'pickRule' }
  /** The notice's action was clicked. */
  | { type: 'noticeAction'; id: 'manageTrust' }
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
  | { type: 'openText'; id: number }
  /** A figure clicked: show those records in the record view (sorted or filtered there). */
  | { type: 'showRecords'; what: 'max' | 'p99' | 'overContext' };

export function isMessage(x: unknown): x is { type: string } {
  return typeof x === 'object' && x !== null && typeof (x as { type?: unknown }).type === 'string';
}
