// `shardwise sample`, `head` and `slice`: records of a shard as JSON Lines on standard output —
// a line of a JSON Lines file exactly as it is in the file, any other record as compact JSON.

import { createSource } from '../engine/sources/index.js';
import { traitsOf } from '../engine/sources/traits.js';
import type { Entry } from '../engine/sources/source.js';
import { hash64 } from '../engine/policy.js';
import { configFromValues } from '../engine/project.js';
import { InputProblem, UsageError, type Parsed } from './options.js';

function count(v: unknown, flag: string, fallback: number, min = 1): number {
  if (v === undefined) return fallback;
  const n = Number(v);
  if (!Number.isSafeInteger(n) || n < min) throw new UsageError(`${flag} takes a whole number of at least ${min}, not "${v}"`);
  return n;
}

/** mulberry32 (a small public-domain generator, common practice): uniform in [0, 1). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function seedOf(v: unknown): number {
  if (v === undefined) return 0;
  const s = String(v);
  const n = Number(s);
  return Number.isSafeInteger(n) ? n >>> 0 : parseInt(hash64(s).slice(0, 8), 16);
}

export function recordLine(e: Entry, jsonLines: boolean): string {
  if (jsonLines && e.text !== undefined) return e.text.replace(/\r$/, '');
  return JSON.stringify(e.value);
}

export async function printRecords(parsed: Parsed, out: NodeJS.WritableStream): Promise<number> {
  const [path, ...extra] = parsed.positional;
  if (!path) throw new UsageError(`no file given (try: shardwise ${parsed.verb} FILE)`);
  if (extra.length) throw new UsageError(`${parsed.verb} reads one file, not ${parsed.positional.length}`);
  let source;
  try {
    const mib = parsed.settings['lines.maxMiB'] as number | undefined;
    const exact = parsed.settings['lines.maxBytes'] as number | undefined;
    source = createSource(path, { maxLineBytes: exact ?? (mib !== undefined ? mib * 1024 * 1024 : 64 * 1024 * 1024), maxReaderBytes: configFromValues(parsed.settings).maxReaderBytes });
  } catch (e) {
    throw new InputProblem((e as Error).message);
  }
  try {
    const info = await source.open();
    const jsonLines = traitsOf(info.format).oneLinePerEntry;
    const lines: string[] = [];
    const write = (s: string) => out.write(`${s}\n`);
    if (parsed.verb === 'sample') {
      const n = count(parsed.opts.count, '--count', 10);
      const random = seededRandom(seedOf(parsed.opts.seed));
      // Reservoir sampling (Vitter's algorithm R): every record is kept with probability n/N.
      const keep: { record: number; line: string }[] = [];
      let seen = 0;
      for await (const e of source.scan()) {
        if (e.value === undefined || e.record === null) continue;
        if (keep.length < n) keep.push({ record: e.record, line: recordLine(e, jsonLines) });
        else {
          const j = Math.floor(random() * (seen + 1));
          if (j < n) keep[j] = { record: e.record, line: recordLine(e, jsonLines) };
        }
        seen++;
      }
      keep.sort((a, b) => a.record - b.record).forEach((k) => lines.push(k.line));
    } else {
      const from = parsed.verb === 'slice' ? count(parsed.opts.from, '--from', NaN) : 1;
      if (Number.isNaN(from)) throw new UsageError('slice needs --from N (1 = the first record)');
      const to = parsed.verb === 'slice' ? count(parsed.opts.to, '--to', Number.MAX_SAFE_INTEGER) : count(parsed.opts.count, '--count', 10);
      if (to < from) throw new UsageError(`--to ${to} is before --from ${from}`);
      for await (const e of source.scan()) {
        if (e.value === undefined || e.record === null) continue;
        const k = e.record + 1;
        if (k < from) continue;
        if (k > to) break;
        lines.push(recordLine(e, jsonLines));
      }
    }
    for (const l of lines) write(l);
  } finally {
    await source.close().catch(() => undefined);
  }
  return 0;
}
