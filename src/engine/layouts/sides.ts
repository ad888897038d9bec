// Pieces shared by the layouts: one field read as plain text, a list of turns, a single turn
// object or a transcript; and the reading a layout builds from them.

import { joinPointer, type RecordIssue } from '../findings.js';
import type { LayoutFields, LTurn, PairSide, Reading, Sequence, Side, TextPiece, TurnList } from './layout.js';
import { has, isPlainObject, parseTranscript, readMediaValue, readTurn, readTurns, turnPieces } from './turnReader.js';

/** A pair side before it is named; unlike `PairSide`, a transcript keeps its string in `text`. */
export type SideValue = Omit<PairSide, 'name'>;

/** Reads `record[key]` as plain text, a list of turns, one turn object, or (if `transcripts`) a transcript. */
export function readSide(record: Record<string, unknown>, key: string, fields: LayoutFields, transcripts = false): SideValue {
  const pointer = joinPointer('', key);
  if (!has(record, key)) return { pointer, present: false, raw: undefined, text: null, turns: null, transcript: false };
  const raw = record[key];
  if (Array.isArray(raw)) return { pointer, present: true, raw, text: null, turns: readTurns(raw, pointer, fields), transcript: false };
  if (isPlainObject(raw) && (['role', 'from', ...(fields.role ?? [])].some((k) => has(raw, k)))) {
    return { pointer, present: true, raw, text: null, turns: [readTurn(raw, 0, pointer, fields)], transcript: false };
  }
  if (typeof raw === 'string' && transcripts) {
    const turns = parseTranscript(raw, pointer);
    if (turns) return { pointer, present: true, raw, text: raw, turns, transcript: true };
  }
  return { pointer, present: true, raw, text: typeof raw === 'string' ? raw : null, turns: null, transcript: false };
}

/** Collects pieces and sequences for one record. */
export class ReadingBuilder {
  readonly pieces: TextPiece[] = [];
  readonly sequences: Sequence[] = [];
  readonly turnLists: TurnList[] = [];
  readonly issues: RecordIssue[] = [];

  constructor(readonly layout: string) {}

  /** Adds a string as one piece; returns its indices (none for a non-string). */
  text(pointer: string, value: unknown, side: Side): number[] {
    if (typeof value !== 'string') return [];
    this.pieces.push({ pointer, text: value, side, kind: 'text' });
    return [this.pieces.length - 1];
  }

  /** Adds every piece of some turns; `side` forces a side, else each turn's role decides. */
  turns(turns: readonly LTurn[], side?: Side): number[] {
    const at: number[] = [];
    for (const t of turns) {
      for (const p of turnPieces(t, side)) {
        this.pieces.push(p);
        at.push(this.pieces.length - 1);
      }
    }
    return at;
  }

  /** Adds a side: a transcript or plain text is one piece; turns piece by piece. */
  side(s: SideValue, textSide: Side): number[] {
    if (!s.present) return [];
    if (s.transcript || s.turns === null) return this.text(s.pointer, s.raw, textSide);
    return this.turns(s.turns);
  }

  sequence(name: string, pieces: number[], turns?: LTurn[]): void {
    this.sequences.push(turns ? { name, pieces, turns } : { name, pieces });
  }

  build(extra: Partial<Reading> = {}): Reading {
    return {
      layout: this.layout,
      pieces: this.pieces,
      sequences: this.sequences.length > 0 ? this.sequences : [{ name: 'record', pieces: this.pieces.map((_, i) => i) }],
      turnLists: this.turnLists,
      issues: this.issues,
      ...extra,
    };
  }
}

/** The first key of `keys` the record has. */
export function pick(record: Record<string, unknown>, keys: readonly string[]): string | null {
  for (const k of keys) if (has(record, k)) return k;
  return null;
}

/** Short description of a value's JSON type, for messages. */
export function kindOf(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'a list';
  if (typeof value === 'object') return 'an object';
  return `a ${typeof value}`;
}

const MEDIA_FIELDS: readonly [string, 'image' | 'audio' | 'video'][] = [
  ['images', 'image'],
  ['image', 'image'],
  ['videos', 'video'],
  ['video', 'video'],
  ['audios', 'audio'],
  ['audio', 'audio'],
];

/** Media a record lists beside its turns (`images: [...]`, `image: "…"` …: common practice of multimodal sets). */
export function recordMedia(record: Record<string, unknown>): NonNullable<Reading['media']> | undefined {
  let out: NonNullable<Reading['media']> | undefined;
  for (const [key, kind] of MEDIA_FIELDS) {
    if (!has(record, key)) continue;
    const v = record[key];
    const pointer = joinPointer('', key);
    const items = Array.isArray(v) ? v.map((x, i) => [x, joinPointer(pointer, i)] as const) : v === null || v === '' ? [] : [[v, pointer] as const];
    out ??= [];
    for (const [item, p] of items) out.push({ kind, pointer: p, ...readMediaValue(item) });
  }
  return out;
}
