// `shardwise stats` and `shardwise merge`: per-shard statistics with their mergeable state, and the
// merge of many such reports into exactly the report one run over all the shards gives.

import { ShardProfile, type ProfileState, type ProfileSummary } from '../engine/stats/profile.js';

export interface StatsFile {
  path: string;
  format: string;
  split?: string;
  layout: string | null;
  encoding: string;
  /** The mergeable state (`shardwise merge` adds these). */
  state: ProfileState;
}

export interface StatsDocument {
  files: (StatsFile & { summary: ProfileSummary })[];
  total: ProfileSummary & { encoding: string };
  /** The total's mergeable state, so merged reports merge again. */
  state: ProfileState;
  /**
   * What bounded state cannot merge and is therefore not in this report at all (reported per shard
   * by other verbs, never faked across shards).
   */
  notMerged: string[];
}

export const NOT_MERGED = ['near-duplicate groups across shards', 'samples', 'most frequent values'];

export function statsDocument(files: StatsFile[]): StatsDocument {
  const profiles = files.map((f) => ShardProfile.fromJSON(f.state));
  const total = new ShardProfile(profiles[0]?.contextLength ?? null);
  total.shards = 0;
  for (const p of profiles) total.merge(p);
  const encodings = [...new Set(files.map((f) => f.encoding))];
  return {
    files: files.map((f, i) => ({ ...f, summary: profiles[i].summary() })),
    total: { encoding: encodings.join(', '), ...total.summary() },
    state: total.toJSON(),
    notMerged: NOT_MERGED,
  };
}

/** Combines `stats --format json` documents (or merged ones): their files in order, one total. */
export function mergeReports(docs: { path: string; doc: { files?: StatsFile[] } }[]): StatsDocument {
  const files: StatsFile[] = [];
  for (const { path, doc } of docs) {
    if (!doc || !Array.isArray(doc.files) || !doc.files.every((f) => f && typeof f === 'object' && f.state)) {
      throw new Error(`${path}: not a report of \`shardwise stats --format json\` (its files carry no mergeable state)`);
    }
    for (const f of doc.files) {
      const { path: p, format, split, layout, encoding, state } = f;
      try {
        ShardProfile.fromJSON(state);
      } catch (e) {
        throw new Error(`${path}: ${p}: ${(e as Error).message}`);
      }
      files.push({ path: p, format, ...(split ? { split } : {}), layout, encoding, state });
    }
  }
  return statsDocument(files);
}

const n = (x: number | null) => (x === null ? '–' : x.toLocaleString('en-US'));

export function printStatsText(doc: StatsDocument, out: NodeJS.WritableStream): void {
  const block = (title: string, s: ProfileSummary, encoding: string) => {
    const t = s.tokens;
    out.write(`${title}\n`);
    out.write(`  records ${n(s.records)}${s.blankLines ? `, blank lines ${n(s.blankLines)}` : ''}${s.invalidLines ? `, unreadable ${n(s.invalidLines)}` : ''}, ${n(s.bytes)} bytes${s.distinctRecords !== null ? `, about ${n(s.distinctRecords)} distinct` : ''}\n`);
    out.write(`  tokens (${encoding}) ${n(t.total)}: prompt ${n(t.prompt)}, response ${n(t.response)}${t.rendered !== undefined ? `; rendered ${n(t.rendered)}, trained ${n(t.trainable ?? 0)}` : ''}; per record p50 ${n(t.p50)}, p90 ${n(t.p90)}, p99 ${n(t.p99)}, max ${n(t.max)}; ${n(t.overContext)} over ${n(t.contextLength)}\n`);
    const rules = Object.entries(s.findings.byRule).map(([r, c]) => `${r} ×${n(c)}`);
    out.write(`  findings ${n(s.findings.total)} (${n(s.findings.bySeverity.error)} errors, ${n(s.findings.bySeverity.warning)} warnings, ${n(s.findings.bySeverity.info)} notes)${rules.length ? `: ${rules.join(', ')}` : ''}\n`);
    if (s.fields.length) {
      const w = Math.max(5, ...s.fields.map((f) => f.name.length));
      out.write(`  ${'field'.padEnd(w)}  types${' '.repeat(40)}nulls  missing\n`);
      for (const f of s.fields) {
        const types = Object.entries(f.types).map(([k, c]) => `${k} ${n(c)}`).join(', ');
        out.write(`  ${f.name.padEnd(w)}  ${types.padEnd(45)}${n(f.nulls).padStart(5)}  ${n(f.missing).padStart(7)}\n`);
      }
    }
  };
  for (const f of doc.files) block(`${f.path}${f.split ? ` [${f.split}]` : ''} (${f.format}${f.layout ? `, layout ${f.layout}` : ''})`, f.summary, f.encoding);
  if (doc.files.length > 1) block(`total (${doc.files.length} files)`, doc.total, doc.total.encoding);
}
