// Preference-pair rules: a prompt with a chosen and a rejected answer (common practice for
// preference training). Turn-level rules on the sides' turn lists live in the chat check.

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { readRecord } from '../layouts/index.js';
import type { LTurn, PairSide } from '../layouts/layout.js';
import { kindOf } from '../layouts/sides.js';
import { isPlainObject } from '../layouts/turnReader.js';

type Turn = LTurn;

export const PAIR_RULES: RuleInfo[] = [
  { id: 'pair-side-missing', family: 'chat', severity: 'error', summary: 'A preference pair lacks its prompt, chosen or rejected side.' },
  { id: 'pair-side-empty', family: 'chat', severity: 'error', summary: 'A side of a preference pair is empty or not text.' },
  { id: 'pair-identical', family: 'chat', severity: 'error', summary: 'The chosen and rejected answers are the same.' },
  { id: 'pair-prompt-mismatch', family: 'chat', severity: 'error', summary: 'The chosen and rejected conversations do not share the same prompt turns.' },
];

type SideName = 'prompt' | 'chosen' | 'rejected';

/** Compared texts ignore leading, trailing and repeated white space: those differences teach nothing. */
export function normaliseText(text: string): string {
  return text.trim().replace(/\s+/g, ' ');
}

/** Stable JSON for comparing tool calls: key order must not make two equal calls differ. */
function stableJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(stableJson).join(',')}]`;
  if (isPlainObject(value)) {
    return `{${Object.keys(value)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${stableJson(value[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(value) ?? 'undefined';
}

function turnSignature(turn: Turn): string {
  const calls = turn.parts
    .filter((p) => p.kind === 'tool-call')
    .map((p) => (p.kind === 'tool-call' ? stableJson({ name: p.name, arguments: parseMaybe(p.arguments) }) : ''))
    .join(',');
  return `${turn.role ?? '?'}\u0000${normaliseText(turn.text)}\u0000${calls}`;
}

/** Arguments written as a JSON string compare equal to the same object written out. */
function parseMaybe(v: unknown): unknown {
  if (typeof v !== 'string') return v;
  try {
    return JSON.parse(v);
  } catch {
    return v;
  }
}

/** The prompt part of a whole conversation: every turn up to and including the last user turn. */
export function promptTurnCount(turns: readonly Turn[]): number {
  for (let i = turns.length - 1; i >= 0; i--) if (turns[i].role === 'user') return i + 1;
  // No user turn: everything before the final answer.
  return Math.max(0, turns.length - 1);
}

function sideIsEmpty(side: PairSide, out: RecordIssue[]): boolean {
  const name = side.pointer.slice(1);
  const raw = side.raw;
  if (side.turns !== null) {
    if (side.turns.length === 0) {
      out.push({ rule: 'pair-side-empty', message: `"${name}" is an empty list of turns`, pointer: side.pointer });
      return true;
    }
    // Empty text inside a turn is the chat check's to report, turn by turn.
    return false;
  }
  if (typeof raw !== 'string') {
    out.push({ rule: 'pair-side-empty', message: `"${name}" is ${kindOf(raw)}, not text or a list of turns`, pointer: side.pointer });
    return true;
  }
  if (raw.trim() === '') {
    out.push({ rule: 'pair-side-empty', message: raw === '' ? `"${name}" is empty` : `"${name}" holds only white space`, pointer: side.pointer });
    return true;
  }
  return false;
}

/** Signatures of the part of a side that is the answer, for comparing chosen with rejected. */
function answerSignatures(side: PairSide, otherHasTurns: boolean): string[] {
  if (side.turns === null) return [`assistant\u0000${normaliseText(side.text ?? '')}\u0000`];
  // Both sides are turn lists: the whole lists are compared. Text against turns: the final turn is.
  const turns = otherHasTurns ? side.turns : side.turns.slice(-1);
  return turns.map((t) => turnSignature(t));
}

export function checkPair(record: unknown, config: CheckConfig, out: RecordIssue[]): void {
  const pair = readRecord(record, config)?.pair;
  if (pair === undefined || !isPlainObject(record)) return;
  const { prompt, chosen, rejected } = pair;

  // A prompt may be left out only when both answers are conversations that carry their own prompt turns.
  const promptInSides =
    chosen.turns !== null && rejected.turns !== null && promptTurnCount(chosen.turns) > 0 && promptTurnCount(rejected.turns) > 0;
  if (!prompt.present && !promptInSides) {
    out.push({ rule: 'pair-side-missing', message: 'preference pair has no "prompt", and its answers do not carry the prompt turns', pointer: '' });
  }
  if (!chosen.present) out.push({ rule: 'pair-side-missing', message: 'preference pair has no "chosen" answer', pointer: '' });
  if (!rejected.present) out.push({ rule: 'pair-side-missing', message: 'preference pair has no "rejected" answer', pointer: '' });

  const empty = new Set<SideName>();
  for (const side of [prompt, chosen, rejected]) {
    if (side.present && sideIsEmpty(side, out)) empty.add(side.name);
  }
  if (!chosen.present || !rejected.present || empty.has('chosen') || empty.has('rejected')) return;

  const a = answerSignatures(chosen, rejected.turns !== null);
  const b = answerSignatures(rejected, chosen.turns !== null);
  if (a.length === b.length && a.every((s, i) => s === b[i])) {
    out.push({ rule: 'pair-identical', message: 'the chosen and rejected answers are the same (ignoring white space)', pointer: rejected.pointer });
  }

  if (chosen.turns !== null && rejected.turns !== null) {
    const nc = promptTurnCount(chosen.turns);
    const nr = promptTurnCount(rejected.turns);
    const names = `"${chosen.pointer.slice(1)}" has ${nc} prompt turn${nc === 1 ? '' : 's'} but "${rejected.pointer.slice(1)}" has ${nr}`;
    if (nc !== nr) {
      out.push({ rule: 'pair-prompt-mismatch', message: names, pointer: rejected.pointer });
      return;
    }
    for (let i = 0; i < nc; i++) {
      const ct = chosen.turns[i];
      const rt = rejected.turns[i];
      if (turnSignature(ct) !== turnSignature(rt)) {
        out.push({ rule: 'pair-prompt-mismatch', message: `prompt turn ${i} differs between "${chosen.pointer.slice(1)}" and "${rejected.pointer.slice(1)}"`, pointer: rt.pointer });
        return;
      }
    }
  }
}

export const pairCheck: Check = {
  name: 'pairs',
  rules: PAIR_RULES,
  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    checkPair(rec.value, config, out.issues);
  },
};
