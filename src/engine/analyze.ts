// Runs the checks over a source's entries and places every issue at its line and column.
// Pure engine code: the same function runs in a worker thread, in the CLI and in unit tests.

import type { Check, RecordResult } from './checks/check.js';
import type { CheckConfig } from './config.js';
import type { Finding, RecordIssue, RuleInfo } from './findings.js';
import type { Entry, Progress, RecordSource } from './sources/source.js';
import { TextLocator } from './json/locate.js';
import { settleConfig } from './stats/shape.js';
import { applyPolicyAll, hash64, recordKey, stableJson } from './policy.js';
import { CancelledError, SetupError, isFatal } from './errors.js';

/** One entry's outcome, as a worker streams it back. */
export interface EntryOutcome {
  entry: number;
  record: number | null;
  /** Content tokens of the record (every piece of text counted on its own). */
  tokens: number | null;
  /** The record's longest sequence in tokens (equal to `tokens` where a record is one sequence). */
  length?: number | null;
  /** Content tokens on the prompt side and on the response side. */
  prompt?: number | null;
  response?: number | null;
  /** With a chat template: tokens of the record's rendered sequences and of their trained spans. */
  rendered?: number | null;
  trainable?: number | null;
  /** The layout that read the record. */
  layout?: string | null;
  kind: 'record' | 'blank' | 'invalid';
  findings: Finding[];
  /** The record's identity (its id field, else a content hash), set when it has findings. */
  key?: string;
  /** Set when the configuration asks for a profile: a content hash and each top-level field's JSON type. */
  profile?: RecordProfile;
}

export interface RecordProfile {
  /** 64-bit content hash (16 hex digits) of the record's text, for distinct counts. */
  hash: string;
  /** [field, type] for each top-level field; type is string, number, boolean, null, object or array. */
  fields: [string, string][];
}

export interface Share {
  /** This worker's share: entries in blocks `b` with `b % count === index`. */
  index: number;
  count: number;
  /** Entries per block. */
  block: number;
}

/** Rules raised by the analysis itself rather than by one source or check. */
export const ANALYSIS_RULES: RuleInfo[] = [
  { id: 'read-failed', family: 'read', severity: 'error', summary: 'The file, or a part of it, could not be read; what could be read is still checked.' },
  { id: 'check-failed', family: 'read', severity: 'error', summary: 'A check could not run on a record (an internal error, reported rather than hidden).' },
];

export interface AnalyzeOptions {
  config: CheckConfig;
  checks: readonly Check[];
  signal?: AbortSignal;
  share?: Share;
  onProgress?: (p: Progress) => void;
  onOutcome: (o: EntryOutcome) => void;
}

export function inShare(entry: number, share: Share | undefined): boolean {
  if (!share || share.count <= 1) return true;
  return Math.floor(entry / share.block) % share.count === share.index;
}

/** Prepares every check once (compile the schema, load the encoding). Throws a clear Error. */
export async function prepareChecks(checks: readonly Check[], config: CheckConfig): Promise<void> {
  for (const c of checks) {
    try {
      await c.prepare?.(config);
    } catch (err) {
      // A schema that does not compile is a setup problem, not a finding about the shard.
      throw new SetupError((err as Error)?.message ?? String(err));
    }
  }
}


/**
 * Checks every entry of the source. A file that breaks off mid-read keeps what was read: the break
 * comes back as a `read-failed` finding. Cancelling and a configuration that cannot work throw.
 */
export async function analyzeSource(source: RecordSource, options: AnalyzeOptions): Promise<Finding | null> {
  const share = options.share;
  const want = share && share.count > 1 ? (e: number) => inShare(e, share) : undefined;
  try {
    const chosen = options.config.checks;
    const checks = chosen ? options.checks.filter((c) => chosen.includes(c.name)) : options.checks;
    const opts = { ...options, checks, config: await settleConfig(source, options.config, options.signal) };
    await prepareChecks(opts.checks, opts.config);
    // Entries of other shares are not parsed here: the pool renumbers records in entry order.
    for await (const entry of source.scan({ signal: opts.signal, onProgress: opts.onProgress, want, exactRecords: want === undefined })) {
      if (opts.signal?.aborted) throw new CancelledError();
      // Sources may deliver entries outside the share; they belong to another worker.
      if (!inShare(entry.entry, share)) continue;
      opts.onOutcome(analyzeEntry(entry, opts.checks, opts.config));
    }
  } catch (err) {
    if (isFatal(err)) throw err;
    return readFailedFinding(err);
  }
  return null;
}

/** Runs every check on one entry and locates the issues. */
export function analyzeEntry(entry: Entry, checks: readonly Check[], config: CheckConfig): EntryOutcome {
  const findings: Finding[] = [...entry.findings];
  const kind: EntryOutcome['kind'] =
    entry.value !== undefined ? 'record' : entry.blank ? 'blank' : 'invalid';
  if (entry.value === undefined || entry.record === null) {
    const kept = applyPolicyAll(findings, config.rules);
    return { entry: entry.entry, record: entry.record, tokens: null, kind, findings: kept, ...(kept.length ? { key: `@${hash64(entry.text ?? '')}` } : {}) };
  }
  const result: RecordResult = { issues: [] };
  for (const check of checks) {
    try {
      check.checkRecord({ record: entry.record, value: entry.value }, config, result);
    } catch (err) {
      result.issues.push({ rule: 'check-failed', message: `${check.name} check failed on this record: ${(err as Error).message}` });
    }
  }
  const rules = ruleTable(checks);
  // One locator for all of the record's issues: its text is read once, not once per issue.
  const locator = result.issues.length && entry.text !== undefined ? new TextLocator(entry.text) : undefined;
  for (const issue of result.issues) findings.push(locateIssue(entry, issue, rules.get(issue.rule), locator));
  const kept = applyPolicyAll(findings, config.rules);
  return {
    ...(kept.length ? { key: recordKey(entry.value, entry.text) } : {}),
    ...(config.profile ? { profile: profileOf(entry) } : {}),
    entry: entry.entry,
    record: entry.record,
    tokens: result.tokens ?? null,
    length: result.length ?? result.tokens ?? null,
    prompt: result.prompt ?? null,
    response: result.response ?? null,
    ...(result.rendered !== undefined ? { rendered: result.rendered, trainable: result.trainable ?? 0 } : {}),
    layout: result.layout ?? null,
    kind,
    findings: kept,
  };
}

function jsonType(v: unknown): string {
  if (v === null || v === undefined) return 'null';
  if (Array.isArray(v)) return 'array';
  if (typeof v === 'bigint') return 'number';
  if (v instanceof Uint8Array) return 'binary';
  return typeof v === 'object' ? 'object' : typeof v;
}

function profileOf(entry: Entry): RecordProfile {
  const v = entry.value;
  const fields: [string, string][] =
    v !== null && typeof v === 'object' && !Array.isArray(v) ? Object.entries(v as Record<string, unknown>).map(([k, x]) => [k, jsonType(x)]) : [];
  return { hash: hash64(entry.text !== undefined ? entry.text.trim() : stableJson(v)), fields };
}

const ruleTables = new WeakMap<readonly Check[], Map<string, RuleInfo>>();
function ruleTable(checks: readonly Check[]): Map<string, RuleInfo> {
  let t = ruleTables.get(checks);
  if (!t) {
    t = new Map();
    for (const r of ANALYSIS_RULES) t.set(r.id, r);
    for (const c of checks) for (const r of c.rules) t.set(r.id, r);
    ruleTables.set(checks, t);
  }
  return t;
}

/**
 * Turns a check's issue into a Finding at the line and column of the offending value. `locator` is
 * the entry's text's, made once for all of a record's issues (one is made here when it is absent).
 */
export function locateIssue(entry: Entry, issue: RecordIssue, rule: RuleInfo | undefined, locator?: TextLocator): Finding {
  const pointer = issue.pointer ?? '';
  let line = entry.line;
  let column = entry.column;
  if (entry.text !== undefined && entry.line !== null) {
    const loc = locator ?? new TextLocator(entry.text);
    const at = safeLocate(loc, pointer);
    // `at` is 1-based in the entry's text; an entry spanning lines (a JSON array element) moves the line.
    if (at) ({ line, column } = loc.placeAt(at, entry.line, entry.column ?? 1));
  }
  return {
    rule: issue.rule,
    family: rule?.family ?? 'read',
    severity: issue.severity ?? rule?.severity ?? 'error',
    message: issue.message,
    record: entry.record,
    line,
    column,
    pointer,
    entry: entry.entry,
    ...(entry.group !== undefined ? { group: entry.group, rowInGroup: entry.rowInGroup } : {}),
  };
}

function safeLocate(locator: TextLocator, pointer: string): number | null {
  try {
    return locator.locate(pointer)?.column ?? null;
  } catch {
    return null;
  }
}


function readFailedFinding(err: unknown): Finding {
  const msg = err instanceof Error ? err.message : String(err);
  return {
    rule: 'read-failed',
    family: 'read',
    severity: 'error',
    message: `reading stopped early: ${msg.replace(/\s+/g, ' ').slice(0, 300)}`,
    record: null,
    line: null,
    column: null,
    pointer: null,
    entry: null,
  };
}
