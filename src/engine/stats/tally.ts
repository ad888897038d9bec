// Gathers entry outcomes (from one or many workers, in any order) into a shard's summary.

import type { EntryOutcome } from '../analyze.js';
import type { Finding, Severity } from '../findings.js';
import { compareFindings } from '../findings.js';

export interface TokenStats {
  total: number;
  max: number;
  p50: number;
  p90: number;
  p99: number;
  overContext: number;
  /** Records whose count is known. */
  counted: number;
}

/**
 * Nearest-rank percentile (common practice: the smallest value with at least p% of values at or
 * below it) over a sorted array.
 */
export function percentile(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return 0;
  const rank = Math.max(1, Math.ceil((p / 100) * n));
  return sorted[Math.min(n, rank) - 1];
}

export function tokenStats(counts: ArrayLike<number>, n: number, contextLength: number): TokenStats {
  const known: number[] = [];
  let total = 0;
  let max = 0;
  let over = 0;
  for (let i = 0; i < n; i++) {
    const c = counts[i];
    if (c < 0) continue;
    known.push(c);
    total += c;
    if (c > max) max = c;
    if (c > contextLength) over++;
  }
  const sorted = Float64Array.from(known).sort();
  return {
    total,
    max,
    p50: percentile(sorted, 50),
    p90: percentile(sorted, 90),
    p99: percentile(sorted, 99),
    overContext: over,
    counted: known.length,
  };
}

/** Token statistics of a shard as every presenter shows them (the CLI document's `tokens`). */
export interface TokenSummary {
  /** The tokenizer's name (kept under this key for readers of earlier reports). */
  encoding: string;
  /** The tokenizer: a built-in encoding name or the model folder's path. */
  tokenizer: string;
  /** Content tokens of the shard: every piece of text of every record, each counted on its own. */
  total: number;
  /** Content tokens on the prompt side (conditioned on) and on the response side (trained on). */
  prompt: number;
  response: number;
  max: number;
  p50: number;
  p90: number;
  p99: number;
  contextLength: number;
  /** Records whose longest sequence (rendered, with a chat template) is over the context length. */
  overContext: number;
  /** With a chat template: tokens of every rendered sequence over the shard, and of their trained spans. */
  rendered?: number;
  trainable?: number;
}

export interface TallySnapshot {
  version: 1;
  entries: number;
  records: number;
  blankLines: number;
  invalidLines: number;
  /** Per record index, its tokens; -1 where not counted. */
  tokens: number[];
  findings: Finding[];
  totalFindings: number;
  bySeverity: Record<Severity, number>;
  byRule: [string, number][];
  contentTotal: number;
  promptTotal: number;
  responseTotal: number;
  renderedTotal: number | null;
  trainableTotal: number;
  byLayout: [string, number][];
  shardLayout: string | null;
}

export class ShardTally {
  entries = 0;
  records = 0;
  blankLines = 0;
  invalidLines = 0;
  /** Token count per record index; -1 = not counted yet. */
  private tokens = new Int32Array(1024).fill(-1);
  private maxRecord = -1;
  readonly findings: Finding[] = [];
  totalFindings = 0;
  readonly bySeverity: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  readonly byRule = new Map<string, number>();
  private sorted = true;
  /** Content tokens summed over records, and their prompt and response sides. */
  private contentTotal = 0;
  private promptTotal = 0;
  private responseTotal = 0;
  /** With a chat template: rendered and trained tokens summed over records (null until a record brings them). */
  private renderedTotal: number | null = null;
  private trainableTotal = 0;
  /** Records read by each layout. */
  readonly byLayout = new Map<string, number>();
  /** The layout settled for the shard, when the analysis reports it. */
  shardLayout: string | null = null;

  /** `keepFindings` caps how many findings are kept in memory; all are still counted. */
  constructor(private readonly keepFindings = 200_000) {}

  /** Everything the tally holds, as plain data (kept between sessions by the editor's results store). */
  snapshot(): TallySnapshot {
    return {
      version: 1,
      entries: this.entries,
      records: this.records,
      blankLines: this.blankLines,
      invalidLines: this.invalidLines,
      tokens: Array.from(this.tokens.subarray(0, this.maxRecord + 1)),
      findings: this.sortedFindings().slice(),
      totalFindings: this.totalFindings,
      bySeverity: { ...this.bySeverity },
      byRule: [...this.byRule.entries()],
      contentTotal: this.contentTotal,
      promptTotal: this.promptTotal,
      responseTotal: this.responseTotal,
      renderedTotal: this.renderedTotal,
      trainableTotal: this.trainableTotal,
      byLayout: [...this.byLayout.entries()],
      shardLayout: this.shardLayout,
    };
  }

  static restore(s: TallySnapshot, keepFindings?: number): ShardTally {
    if (!s || s.version !== 1 || !Array.isArray(s.tokens) || !Array.isArray(s.findings)) throw new Error('not a tally snapshot of version 1');
    const t = new ShardTally(keepFindings);
    t.entries = s.entries;
    t.records = s.records;
    t.blankLines = s.blankLines;
    t.invalidLines = s.invalidLines;
    t.tokens = new Int32Array(Math.max(1024, s.tokens.length)).fill(-1);
    t.tokens.set(s.tokens);
    t.maxRecord = s.tokens.length - 1;
    for (const f of s.findings) t.findings.push(f);
    t.totalFindings = s.totalFindings;
    Object.assign(t.bySeverity, s.bySeverity);
    for (const [k, v] of s.byRule) t.byRule.set(k, v);
    t.contentTotal = s.contentTotal;
    t.promptTotal = s.promptTotal;
    t.responseTotal = s.responseTotal;
    t.renderedTotal = s.renderedTotal;
    t.trainableTotal = s.trainableTotal;
    for (const [k, v] of s.byLayout) t.byLayout.set(k, v);
    t.shardLayout = s.shardLayout;
    return t;
  }

  add(o: EntryOutcome): void {
    this.entries = Math.max(this.entries, o.entry + 1);
    if (o.kind === 'record') this.records++;
    else if (o.kind === 'blank') this.blankLines++;
    else this.invalidLines++;
    if (o.record !== null) {
      this.maxRecord = Math.max(this.maxRecord, o.record);
      // Per-record figures (percentiles, maximum, over context) are the longest sequence's.
      const length = o.length ?? o.tokens;
      if (length !== null) this.setTokens(o.record, length);
      if (o.tokens !== null) this.contentTotal += o.tokens;
      this.promptTotal += o.prompt ?? 0;
      this.responseTotal += o.response ?? (o.prompt == null ? (o.tokens ?? 0) : 0);
      if (o.rendered != null) {
        this.renderedTotal = (this.renderedTotal ?? 0) + o.rendered;
        this.trainableTotal += o.trainable ?? 0;
      }
      if (o.layout) this.byLayout.set(o.layout, (this.byLayout.get(o.layout) ?? 0) + 1);
    }
    for (const f of o.findings) this.addFinding(f);
  }

  addFinding(f: Finding): void {
    this.totalFindings++;
    this.bySeverity[f.severity]++;
    this.byRule.set(f.rule, (this.byRule.get(f.rule) ?? 0) + 1);
    if (this.findings.length < this.keepFindings) {
      const last = this.findings[this.findings.length - 1];
      if (last && compareFindings(last, f) > 0) this.sorted = false;
      this.findings.push(f);
    }
  }

  setTokens(record: number, count: number): void {
    if (record >= this.tokens.length) {
      let size = this.tokens.length;
      while (size <= record) size *= 2;
      const next = new Int32Array(size).fill(-1);
      next.set(this.tokens);
      this.tokens = next;
    }
    this.tokens[record] = Math.min(count, 0x7fffffff);
  }

  /** The shard's layout (settled, else the one that read most records) and the share of records it read. */
  layout(): { id: string; share: number } | null {
    let id = this.shardLayout;
    if (id === null) {
      let n = 0;
      for (const [k, v] of this.byLayout) if (v > n) [id, n] = [k, v];
    }
    if (id === null) return null;
    return { id, share: this.records > 0 ? (this.byLayout.get(id) ?? 0) / this.records : 0 };
  }

  tokensOf(record: number): number | null {
    if (record < 0 || record >= this.tokens.length) return null;
    const v = this.tokens[record];
    return v < 0 ? null : v;
  }

  /** Findings in file order. */
  sortedFindings(): Finding[] {
    if (!this.sorted) {
      this.findings.sort(compareFindings);
      this.sorted = true;
    }
    return this.findings;
  }

  tokenStats(contextLength: number): TokenStats {
    return tokenStats(this.tokens, this.maxRecord + 1, contextLength);
  }

  /** `tokenizer` names the tokenizer (`tokenizerOf(config)`; an encoding name for the built-ins). */
  tokenSummary(tokenizer: string, contextLength: number): TokenSummary {
    const t = this.tokenStats(contextLength);
    return {
      encoding: tokenizer,
      tokenizer,
      total: this.contentTotal,
      prompt: this.promptTotal,
      response: this.responseTotal,
      max: t.max,
      p50: t.p50,
      p90: t.p90,
      p99: t.p99,
      contextLength,
      overContext: t.overContext,
      ...(this.renderedTotal !== null ? { rendered: this.renderedTotal, trainable: this.trainableTotal } : {}),
    };
  }
}
