// The tokens family: each record's token count under the configured encoding, records that
// overflow the context window, and text that spells a special token.

import type { CheckConfig } from '../config.js';
import { joinPointer, type RecordIssue, type RuleInfo } from '../findings.js';
import { findChatMarkerText, findSpecialTokenText, getTokenCounter, loadTokenCounter, type TokenCounter } from '../tokens/counter.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { extractConversation, extractPair, isPlainObject, type PairSide, type Turn } from './conversation.js';

export const TOKENS_RULES: RuleInfo[] = [
  {
    id: 'tokens-over-context',
    family: 'tokens',
    severity: 'warning',
    summary: 'The record has more tokens than the configured context length.',
  },
  {
    id: 'tokens-special-text',
    family: 'tokens',
    severity: 'warning',
    summary: 'Text spells a special token of the encoding; it is counted as ordinary text.',
  },
  {
    id: 'tokens-no-text',
    family: 'tokens',
    severity: 'info',
    summary: 'The record holds no text to count (no turns, no pair sides, no string field).',
  },
];

/** One piece of a record's text and where it sits. */
export interface TextUnit {
  /** Pointer to the string (or list of parts) holding the text. */
  pointer: string;
  /** Pointer to the turn (chat records and turn-list pair sides), else the same as `pointer`. */
  turnPointer: string;
  role: string | null;
  text: string;
}

function turnUnit(turn: Turn): TextUnit {
  return { pointer: turn.contentPointer, turnPointer: turn.pointer, role: turn.role, text: turn.text };
}

function sideUnits(side: PairSide | null): TextUnit[] {
  if (side === null) return [];
  // Sides made of turns are counted turn by turn, so the joining newlines add nothing.
  if (side.turns !== null) return side.turns.map(turnUnit);
  return [{ pointer: side.pointer, turnPointer: side.pointer, role: null, text: side.text }];
}

/**
 * The text a record is counted by: a chat record's turns; a preference pair's prompt, chosen and
 * rejected; else the first of `config.textFields` holding a string; else every top-level string
 * (layouts such as prompt/completion, common practice). Null when the record holds no text at all.
 */
export function textUnits(value: unknown, config: CheckConfig): TextUnit[] | null {
  const conversation = extractConversation(value, config);
  if (conversation !== null) return conversation.turns.map(turnUnit);
  const pair = extractPair(value, config);
  if (pair !== null) return [...sideUnits(pair.prompt), ...sideUnits(pair.chosen), ...sideUnits(pair.rejected)];
  if (typeof value === 'string') return [{ pointer: '', turnPointer: '', role: null, text: value }];
  if (!isPlainObject(value)) return null;
  for (const field of config.textFields) {
    const text = Object.prototype.hasOwnProperty.call(value, field) ? value[field] : undefined;
    if (typeof text === 'string') {
      const pointer = joinPointer('', field);
      return [{ pointer, turnPointer: pointer, role: null, text }];
    }
  }
  const units: TextUnit[] = [];
  for (const [key, text] of Object.entries(value)) {
    if (typeof text !== 'string') continue;
    const pointer = joinPointer('', key);
    units.push({ pointer, turnPointer: pointer, role: null, text });
  }
  return units.length > 0 ? units : null;
}

/** Token count of each turn (or text field) of a record, for the detail pane. Needs the encoding loaded. */
export function turnTokenCounts(value: unknown, config: CheckConfig): { pointer: string; role: string | null; tokens: number }[] {
  const counter = getTokenCounter(config.encoding);
  return (textUnits(value, config) ?? []).map((u) => ({ pointer: u.turnPointer, role: u.role, tokens: counter.count(u.text) }));
}

/** The record's token count: the sum over its text units (0 when it holds none). Needs the encoding loaded. */
export function recordTokenCount(value: unknown, config: CheckConfig): number {
  const counter = getTokenCounter(config.encoding);
  return sumCounts(counter, textUnits(value, config) ?? []);
}

function sumCounts(counter: TokenCounter, units: readonly TextUnit[]): number {
  let total = 0;
  for (const u of units) total += counter.count(u.text);
  return total;
}

function specialTextIssue(unit: TextUnit, config: CheckConfig): RecordIssue | null {
  const hits = findSpecialTokenText(unit.text, config.encoding);
  if (hits.length === 0) {
    const markers = findChatMarkerText(unit.text);
    if (markers.length === 0) return null;
    const names = [...new Set(markers.map((h) => h.token))].map((n) => `"${n}"`).join(', ');
    return {
      rule: 'tokens-special-text',
      message:
        `Text spells the chat-template marker${markers.length > 1 ? 's' : ''} ${names}; ` +
        'a pipeline that renders chats through such a template would read a turn boundary here.',
      pointer: unit.pointer,
    };
  }
  const names = [...new Set(hits.map((h) => h.token))];
  const spelled = names.map((n) => `"${n}"`).join(', ');
  const times = hits.length === 1 ? 'once' : `${hits.length} times`;
  return {
    rule: 'tokens-special-text',
    message:
      `Text spells the ${config.encoding} special token${names.length > 1 ? 's' : ''} ${spelled} (${times}); ` +
      'it is counted as ordinary text, but a trainer that encodes special tokens would read a control token here.',
    pointer: unit.pointer,
  };
}

export const tokensCheck: Check = {
  name: 'tokens',
  rules: TOKENS_RULES,

  async prepare(config: CheckConfig): Promise<void> {
    await loadTokenCounter(config.encoding);
  },

  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const counter = getTokenCounter(config.encoding);
    const units = textUnits(rec.value, config);
    if (units === null) {
      out.tokens = 0;
      // A value that is not an object is already a record-not-object finding: one finding per fault.
      if (isPlainObject(rec.value)) out.issues.push({ rule: 'tokens-no-text', message: 'No text to count: the record has no turns, no pair sides and no string field.', pointer: '' });
      return;
    }
    const total = sumCounts(counter, units);
    out.tokens = total;
    if (total > config.contextLength) {
      out.issues.push({
        rule: 'tokens-over-context',
        message: `The record has ${total} tokens (${config.encoding}), more than the context length of ${config.contextLength}.`,
        pointer: '',
      });
    }
    for (const unit of units) {
      const issue = specialTextIssue(unit, config);
      if (issue) out.issues.push(issue);
    }
  },
};
