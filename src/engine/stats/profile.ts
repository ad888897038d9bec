// A shard's statistics as mergeable state: everything in it adds (counts, sums, findings by rule,
// fixed-bin histograms) or merges exactly (quantile and distinct-count sketches), so the profile
// of many shards merged equals the profile one run over all of them builds.

import type { EntryOutcome } from '../analyze.js';
import type { Finding, Severity } from '../findings.js';
import { DistinctSketch, PowerHistogram, QuantileSketch, type DistinctSketchState, type QuantileSketchState } from './sketch.js';

/** Field names tracked per profile; more are counted together (bounded state whatever the data). */
export const MAX_TRACKED_FIELDS = 256;

export const PROFILE_VERSION = 1;

export interface ProfileState {
  version: number;
  shards: number;
  entries: number;
  records: number;
  blankLines: number;
  invalidLines: number;
  bytes: number;
  tokens: {
    total: number;
    prompt: number;
    response: number;
    rendered?: number;
    trainable?: number;
    max: number;
    overContext: number;
    contextLength: number | null;
    sketch: QuantileSketchState;
    histogram: { from: number; to: number; count: number }[];
  };
  findings: { bySeverity: Record<Severity, number>; byRule: Record<string, number> };
  /** field → JSON type → records; `missing` is derived (records − present). */
  fields: Record<string, Record<string, number>>;
  /** Records whose fields were beyond the tracked ones. */
  untrackedFields: number;
  distinct: DistinctSketchState | null;
}

/** A shard's figures as reports show them. */
export interface ProfileSummary {
  shards: number;
  records: number;
  blankLines: number;
  invalidLines: number;
  bytes: number;
  tokens: { total: number; prompt: number; response: number; rendered?: number; trainable?: number; max: number; p50: number; p90: number; p99: number; contextLength: number | null; overContext: number };
  findings: { total: number; bySeverity: Record<Severity, number>; byRule: Record<string, number> };
  fields: { name: string; types: Record<string, number>; nulls: number; missing: number }[];
  /** Distinct records by content (HyperLogLog estimate), when profiled. */
  distinctRecords: number | null;
}

export class ShardProfile {
  shards = 1;
  entries = 0;
  records = 0;
  blankLines = 0;
  invalidLines = 0;
  bytes = 0;
  private total = 0;
  private prompt = 0;
  private response = 0;
  private max = 0;
  private overContext = 0;
  /** With a chat template: rendered and trained tokens (null while no record brought them). */
  private rendered: number | null = null;
  private trainable = 0;
  private readonly sketch = new QuantileSketch();
  private readonly histogram = new PowerHistogram();
  readonly bySeverity: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  readonly byRule = new Map<string, number>();
  private readonly fields = new Map<string, Map<string, number>>();
  private untrackedFields = 0;
  private distinct: DistinctSketch | null = null;

  /** The context length records were judged against; null once profiles judged by different ones merge. */
  constructor(public contextLength: number | null) {}

  add(o: EntryOutcome): void {
    this.entries++;
    if (o.kind === 'record') {
      this.records++;
      const length = o.length ?? o.tokens;
      if (length !== null && length !== undefined) {
        this.sketch.add(length);
        this.histogram.add(length);
        if (length > this.max) this.max = length;
        if (this.contextLength !== null && length > this.contextLength) this.overContext++;
      }
      this.total += o.tokens ?? 0;
      if (o.rendered != null) {
        this.rendered = (this.rendered ?? 0) + o.rendered;
        this.trainable += o.trainable ?? 0;
      }
      this.prompt += o.prompt ?? 0;
      this.response += o.response ?? (o.prompt == null ? (o.tokens ?? 0) : 0);
      if (o.profile) {
        (this.distinct ??= new DistinctSketch()).addHash(o.profile.hash);
        let untracked = false;
        for (const [name, type] of o.profile.fields) {
          let types = this.fields.get(name);
          if (!types) {
            if (this.fields.size >= MAX_TRACKED_FIELDS) {
              untracked = true;
              continue;
            }
            types = new Map();
            this.fields.set(name, types);
          }
          types.set(type, (types.get(type) ?? 0) + 1);
        }
        if (untracked) this.untrackedFields++;
      }
    } else if (o.kind === 'blank') this.blankLines++;
    else this.invalidLines++;
    for (const f of o.findings) this.addFinding(f);
  }

  addFinding(f: Finding): void {
    this.bySeverity[f.severity]++;
    this.byRule.set(f.rule, (this.byRule.get(f.rule) ?? 0) + 1);
  }

  merge(other: ShardProfile): void {
    // Each shard's over-context count stays the one judged by its own context length.
    if (other.contextLength !== this.contextLength) this.contextLength = null;
    this.shards += other.shards;
    this.entries += other.entries;
    this.records += other.records;
    this.blankLines += other.blankLines;
    this.invalidLines += other.invalidLines;
    this.bytes += other.bytes;
    this.total += other.total;
    if (other.rendered !== null) {
      this.rendered = (this.rendered ?? 0) + other.rendered;
      this.trainable += other.trainable;
    }
    this.prompt += other.prompt;
    this.response += other.response;
    this.max = Math.max(this.max, other.max);
    this.overContext += other.overContext;
    this.sketch.merge(other.sketch);
    this.histogram.merge(other.histogram);
    for (const s of ['error', 'warning', 'info'] as const) this.bySeverity[s] += other.bySeverity[s];
    for (const [r, n] of other.byRule) this.byRule.set(r, (this.byRule.get(r) ?? 0) + n);
    for (const [name, types] of other.fields) {
      let mine = this.fields.get(name);
      if (!mine) {
        if (this.fields.size >= MAX_TRACKED_FIELDS) {
          this.untrackedFields += [...types.values()].reduce((a, b) => Math.max(a, b), 0);
          continue;
        }
        mine = new Map();
        this.fields.set(name, mine);
      }
      for (const [t, n] of types) mine.set(t, (mine.get(t) ?? 0) + n);
    }
    this.untrackedFields += other.untrackedFields;
    if (other.distinct) (this.distinct ??= new DistinctSketch(other.distinct.p)).merge(other.distinct);
  }

  summary(): ProfileSummary {
    const byRule = Object.fromEntries([...this.byRule.entries()].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)));
    const fields = [...this.fields.entries()]
      .sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0))
      .map(([name, types]) => {
        const present = [...types.values()].reduce((a, b) => a + b, 0);
        return { name, types: Object.fromEntries([...types.entries()].sort()), nulls: types.get('null') ?? 0, missing: this.records - present };
      });
    return {
      shards: this.shards,
      records: this.records,
      blankLines: this.blankLines,
      invalidLines: this.invalidLines,
      bytes: this.bytes,
      tokens: {
        ...this.sums(),
        p50: this.sketch.quantile(0.5),
        p90: this.sketch.quantile(0.9),
        p99: this.sketch.quantile(0.99),
      },
      findings: { total: this.bySeverity.error + this.bySeverity.warning + this.bySeverity.info, bySeverity: { ...this.bySeverity }, byRule },
      fields,
      distinctRecords: this.distinct ? Math.min(this.records, this.distinct.estimate()) : null,
    };
  }

  /** The token figures that add across shards. */
  private sums() {
    return {
      total: this.total,
      prompt: this.prompt,
      response: this.response,
      ...(this.rendered !== null ? { rendered: this.rendered, trainable: this.trainable } : {}),
      max: this.max,
      contextLength: this.contextLength,
      overContext: this.overContext,
    };
  }

  toJSON(): ProfileState {
    return {
      version: PROFILE_VERSION,
      shards: this.shards,
      entries: this.entries,
      records: this.records,
      blankLines: this.blankLines,
      invalidLines: this.invalidLines,
      bytes: this.bytes,
      tokens: {
        ...this.sums(),
        sketch: this.sketch.toJSON(),
        histogram: this.histogram.toJSON(),
      },
      findings: { bySeverity: { ...this.bySeverity }, byRule: Object.fromEntries([...this.byRule.entries()].sort()) },
      fields: Object.fromEntries([...this.fields.entries()].sort().map(([k, t]) => [k, Object.fromEntries([...t.entries()].sort())])),
      untrackedFields: this.untrackedFields,
      distinct: this.distinct?.toJSON() ?? null,
    };
  }

  static fromJSON(s: ProfileState): ShardProfile {
    if (!s || typeof s !== 'object' || s.version !== PROFILE_VERSION || !s.tokens?.sketch) {
      throw new Error(`not a mergeable statistics state of version ${PROFILE_VERSION} (made by \`shardwise stats --format json\`)`);
    }
    const p = new ShardProfile(s.tokens.contextLength);
    p.shards = s.shards;
    p.entries = s.entries;
    p.records = s.records;
    p.blankLines = s.blankLines;
    p.invalidLines = s.invalidLines;
    p.bytes = s.bytes;
    p.total = s.tokens.total;
    p.prompt = s.tokens.prompt;
    p.response = s.tokens.response;
    if (typeof s.tokens.rendered === 'number') {
      p.rendered = s.tokens.rendered;
      p.trainable = s.tokens.trainable ?? 0;
    }
    p.max = s.tokens.max;
    p.overContext = s.tokens.overContext;
    p.sketch.merge(QuantileSketch.fromJSON(s.tokens.sketch));
    p.histogram.merge(PowerHistogram.fromJSON(s.tokens.histogram));
    for (const sev of ['error', 'warning', 'info'] as const) p.bySeverity[sev] = s.findings.bySeverity[sev] ?? 0;
    for (const [r, n] of Object.entries(s.findings.byRule)) p.byRule.set(r, n);
    for (const [name, types] of Object.entries(s.fields)) p.fields.set(name, new Map(Object.entries(types)));
    p.untrackedFields = s.untrackedFields;
    p.distinct = s.distinct ? DistinctSketch.fromJSON(s.distinct) : null;
    return p;
  }
}
