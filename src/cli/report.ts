// The CLI's result model: one entry per file and a total across files, the shape of the JSON
// document (stable: later stages extend it, never break it).

import type { Finding, Severity } from '../engine/findings.js';
import type { FormatName } from '../engine/sources/source.js';
import type { ProfileSummary } from '../engine/stats/profile.js';
import type { TokenSummary } from '../engine/stats/tally.js';

export type ReportFinding = Pick<Finding, 'rule' | 'family' | 'severity' | 'message' | 'record' | 'line' | 'column' | 'pointer'> & {
  /** The record's identity for baselines: `id=…` from an id field, else `#` and a content hash. */
  recordKey: string | null;
  /** 1-based row (columnar files), as the record view shows it. */
  row?: number;
  /** True when a baseline holds this finding (it does not fail the run). */
  baseline?: boolean;
};

export interface FileReport {
  path: string;
  format: FormatName;
  /** The split of a saved data set the file belongs to. */
  split?: string;
  records: number;
  /** The layout that read the shard's records (`turns`, `preference` …), null when none did. */
  layout: string | null;
  /** Share of the records the shard's layout read (0..1). */
  layoutShare: number;
  tokens: TokenSummary;
  findings: ReportFinding[];
  /** Every finding of the file, listed or not (`--max-findings` caps the list). */
  findingsTotal: number;
  /** Findings by rule id, all counted. */
  findingsByRule: Record<string, number>;
}

/** Across every file: shaped like one file's entry (records, tokens with percentiles, findings by rule). */
export interface TotalReport {
  files: number;
  records: number;
  tokens: ProfileSummary['tokens'] & { encoding: string };
  findings: ProfileSummary['findings'];
}

export interface Report {
  files: FileReport[];
  total: TotalReport;
}

export interface FileExtras {
  entries: number;
  blankLines: number;
  invalidLines: number;
  totalFindings: number;
  bySeverity: Record<Severity, number>;
  byRule: Map<string, number>;
  /** Findings a baseline holds, not counted against the run. */
  baselined: number;
}

export interface Printer {
  print(report: Report, extras: FileExtras[], out: NodeJS.WritableStream): void;
}
