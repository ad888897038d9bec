// The CLI's result model: one entry per file, the shape of the JSON document (stable: later
// stages extend it, never break it).

import type { Family, Severity } from '../engine/findings.js';
import type { FormatName } from '../engine/sources/source.js';

export interface FileReport {
  path: string;
  format: FormatName;
  records: number;
  tokens: {
    encoding: string;
    total: number;
    max: number;
    p50: number;
    p90: number;
    p99: number;
    contextLength: number;
    overContext: number;
  };
  findings: {
    rule: string;
    family: Family;
    severity: Severity;
    message: string;
    record: number | null;
    line: number | null;
    column: number | null;
    pointer: string | null;
  }[];
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
