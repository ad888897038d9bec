// The CLI's result model: one entry per file, the shape of the JSON document (stable: later
// stages extend it, never break it).

import type { Finding, Severity } from '../engine/findings.js';
import type { FormatName } from '../engine/sources/source.js';
import type { TokenSummary } from '../engine/stats/tally.js';

export interface FileReport {
  path: string;
  format: FormatName;
  records: number;
  /** The layout that read the shard's records (`turns`, `preference` …), null when none did. */
  layout: string | null;
  /** Share of the records the shard's layout read (0..1). */
  layoutShare: number;
  tokens: TokenSummary;
  findings: Pick<Finding, 'rule' | 'family' | 'severity' | 'message' | 'record' | 'line' | 'column' | 'pointer'>[];
}

export interface Report {
  files: FileReport[];
}

export interface FileExtras {
  entries: number;
  blankLines: number;
  invalidLines: number;
  totalFindings: number;
  bySeverity: Record<Severity, number>;
  byRule: Map<string, number>;
}

export interface Printer {
  print(report: Report, extras: FileExtras[], out: NodeJS.WritableStream): void;
}
