// A check turns one record into issues; it knows nothing of formats or screens.

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import type { SettingSpec } from '../settings.js';

export interface RecordUnderCheck {
  /** 0-based record index. */
  record: number;
  /** The record as a plain JSON value. */
  value: unknown;
}

export interface RecordResult {
  issues: RecordIssue[];
  /** Set by the tokens check: the record's content tokens (every piece of text on its own, summed). */
  tokens?: number;
  /** Set by the tokens check: the record's longest sequence in tokens (what the context check judges). */
  length?: number;
  /** Set by the tokens check: content tokens on the prompt side and on the response side. */
  prompt?: number;
  response?: number;
  /** Set by the tokens check when the model has a chat template: tokens of the rendered sequences, and of their trained spans. */
  rendered?: number;
  trainable?: number;
  /** Set by the analysis: the layout that read the record. */
  layout?: string;
}

export interface Check {
  /** Stable name of the family of rules this check owns (for logs and docs). */
  readonly name: string;
  readonly rules: readonly RuleInfo[];
  /** The settings this check reads, declared beside its rules (the project file, the CLI and the editor read them from here). */
  readonly settings?: readonly SettingSpec[];
  /**
   * Runs once per analysis before any record (compile a schema, load an encoding).
   * Throws an Error with a clear message when the configuration cannot work.
   */
  prepare?(config: CheckConfig): Promise<void> | void;
  /** Adds this check's issues (and, for tokens, the count) for one record to `out`. */
  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void;
}
