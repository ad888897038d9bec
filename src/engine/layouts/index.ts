// The layouts the engine knows, and the one place that decides which layout reads a record.
// Adding a layout is one file in this folder and one line in LAYOUTS.

import type { CheckConfig } from '../config.js';
import type { RuleInfo } from '../findings.js';
import { evalLayout } from './evalItems.js';
import { feedbackLayout } from './feedback.js';
import { instructionLayout } from './instruction.js';
import type { Layout, LayoutFields, Reading } from './layout.js';
import { plainTextLayout } from './plainText.js';
import { preferenceLayout } from './preference.js';
import { promptCompletionLayout } from './promptCompletion.js';
import { turnsLayout } from './turns.js';
import { isPlainObject } from './turnReader.js';

/** In order of precedence when two layouts are equally sure. */
export const LAYOUTS: readonly Layout[] = [
  preferenceLayout,
  feedbackLayout,
  promptCompletionLayout,
  turnsLayout,
  instructionLayout,
  evalLayout,
  plainTextLayout,
];

export const LAYOUT_IDS: readonly string[] = LAYOUTS.map((l) => l.id);

export function layoutById(id: string): Layout | undefined {
  return LAYOUTS.find((l) => l.id === id);
}

export const LAYOUT_RULES: readonly RuleInfo[] = [
  { id: 'layout-mismatch', family: 'layout', severity: 'warning', summary: "The record fits another layout than its shard's (a chat among pairs, a pair among plain texts …)." },
  ...LAYOUTS.flatMap((l) => l.rules),
];

export function fieldsOf(config: CheckConfig): LayoutFields {
  return { ...config.layout.fields, text: config.textFields };
}

/** The layout most sure of the record, with its score (0 when none recognises it). */
export function bestLayout(record: Record<string, unknown>, fields: LayoutFields): { layout: Layout; score: number } {
  let best = plainTextLayout;
  let score = 0;
  for (const l of LAYOUTS) {
    const s = l.recognise(record, fields);
    if (s > score) {
      best = l;
      score = s;
    }
  }
  return { layout: best, score };
}

/** What reading one record gave: the reading, the layout it fits best, and whether that is the shard's. */
export interface RecordReading extends Reading {
  /** The layout the record fits best on its own. */
  fits: string;
  /** True when the record fits another layout than the shard's. */
  mismatch: boolean;
}

/** The layout that reads every record: the one the user set, else the one settled for the shard. */
export function shardLayoutId(config: CheckConfig): string | null {
  return config.layout.id !== 'auto' ? config.layout.id : (config.shardLayout ?? null);
}

const cache = new WeakMap<object, { config: CheckConfig; reading: RecordReading | null }>();

/**
 * Reads a record with the shard's layout where it fits, else with the layout it fits best.
 * Null when the record is not an object, or no layout finds anything in it. Cached per value and
 * configuration, so the checks of one record share one reading.
 */
export function readRecord(value: unknown, config: CheckConfig): RecordReading | null {
  if (typeof value === 'string') {
    return { layout: 'text', fits: 'text', mismatch: false, pieces: [{ pointer: '', text: value, side: 'response', kind: 'text' }], sequences: [{ name: 'record', pieces: [0] }], turnLists: [], issues: [] };
  }
  if (!isPlainObject(value)) return null;
  const hit = cache.get(value);
  if (hit && hit.config === config) return hit.reading;
  const reading = readUncached(value, config);
  cache.set(value, { config, reading });
  return reading;
}

function readUncached(record: Record<string, unknown>, config: CheckConfig): RecordReading | null {
  const fields = fieldsOf(config);
  const best = bestLayout(record, fields);
  const shardId = shardLayoutId(config);
  const shard = shardId !== null ? layoutById(shardId) : undefined;
  let use = best.layout;
  let useScore = best.score;
  if (shard) {
    const s = shard.recognise(record, fields);
    // A layout the user set reads every record it recognises at all; a settled one yields to a surer one.
    if (s > 0 && (config.layout.id !== 'auto' || s >= best.score)) {
      use = shard;
      useScore = s;
    }
  }
  if (useScore === 0) return null;
  // In a chat shard, a record with only loose text is a record without a conversation: the chat
  // rules report that, once.
  const mismatch =
    shard !== undefined && use.id !== shard.id && !(use.id === 'text' && config.chat.requireConversation === true);
  return { ...use.read(record, fields), fits: best.layout.id, mismatch };
}

/** Share of sampled records each layout fits best: decides the shard's layout. */
export function decideLayout(values: readonly unknown[], config: CheckConfig): { id: string; share: number } | null {
  const fields = fieldsOf(config);
  const counts = new Map<string, number>();
  let objects = 0;
  for (const v of values) {
    if (!isPlainObject(v)) continue;
    const b = bestLayout(v, fields);
    if (b.score === 0) continue;
    objects++;
    counts.set(b.layout.id, (counts.get(b.layout.id) ?? 0) + 1);
  }
  if (objects === 0) return null;
  let id = '';
  let n = -1;
  for (const l of LAYOUTS) {
    const c = counts.get(l.id) ?? 0;
    if (c > n) {
      id = l.id;
      n = c;
    }
  }
  return { id, share: n / objects };
}
