// The tokens family: each record's token count under the configured encoding, records that
// overflow the context window, and text that spells a special token.

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import { findChatMarkerText, findSpecialTokenText, getTokenCounter, loadTokenCounter, type TokenCounter } from '../tokens/counter.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { readRecord } from '../layouts/index.js';
import type { Reading, TextPiece } from '../layouts/layout.js';
import { isPlainObject } from '../layouts/turnReader.js';

export const TOKENS_RULES: RuleInfo[] = [
  {
    id: 'tokens-over-context',
    family: 'tokens',
    severity: 'warning',
    summary: 'The record (its longest sequence: for a pair, prompt + chosen or prompt + rejected) has more tokens than the context length.',
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

/** Token figures of one record. */
export interface RecordTokens {
  /** Content tokens: every piece of text counted on its own, summed. */
  content: number;
  /** Content tokens on the prompt side and the response side. */
  prompt: number;
  response: number;
  /** The longest sequence a trainer feeds (a pair: prompt + chosen or prompt + rejected). */
  length: number;
  /** Name of that sequence. */
  longest: string;
}

/** Counts every piece and sequence of a reading. Needs the encoding loaded. */
export function countReading(reading: Reading, counter: TokenCounter): RecordTokens & { perPiece: number[] } {
  const perPiece = reading.pieces.map((p) => counter.count(p.text));
  let content = 0;
  let prompt = 0;
  reading.pieces.forEach((p, i) => {
    content += perPiece[i];
    if (p.side === 'prompt') prompt += perPiece[i];
  });
  let length = 0;
  let longest = reading.sequences[0]?.name ?? 'record';
  for (const seq of reading.sequences) {
    let n = 0;
    for (const i of seq.pieces) n += perPiece[i];
    if (n > length) {
      length = n;
      longest = seq.name;
    }
  }
  return { content, prompt, response: content - prompt, length, longest, perPiece };
}

/** Token count of each turn (or text field) of a record, for the detail pane. Needs the encoding loaded. */
export function turnTokenCounts(value: unknown, config: CheckConfig): { pointer: string; role: string | null; tokens: number }[] {
  const counter = getTokenCounter(config.encoding);
  const reading = readRecord(value, config);
  if (reading === null) return [];
  const { perPiece } = countReading(reading, counter);
  // A turn's count is the sum of its pieces: every piece pointer starts with its turn's pointer.
  const out: { pointer: string; role: string | null; tokens: number }[] = [];
  const turns = reading.turnLists.flatMap((l) => l.turns);
  const seen = new Set<string>();
  for (const t of turns) {
    if (seen.has(t.pointer)) continue;
    seen.add(t.pointer);
    let n = 0;
    reading.pieces.forEach((p, i) => {
      if (p.pointer === t.pointer || p.pointer.startsWith(t.pointer + '/')) n += perPiece[i];
    });
    out.push({ pointer: t.pointer, role: t.role, tokens: n });
  }
  reading.pieces.forEach((p, i) => {
    if (!turns.some((t) => p.pointer === t.pointer || p.pointer.startsWith(t.pointer + '/'))) out.push({ pointer: p.pointer, role: null, tokens: perPiece[i] });
  });
  return out;
}

/** The record's content-token count (0 when it holds no text). Needs the encoding loaded. */
export function recordTokenCount(value: unknown, config: CheckConfig): number {
  const reading = readRecord(value, config);
  return reading === null ? 0 : countReading(reading, getTokenCounter(config.encoding)).content;
}

function specialTextIssue(unit: TextPiece, config: CheckConfig): RecordIssue | null {
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
    const reading = readRecord(rec.value, config);
    if (reading === null) {
      out.tokens = 0;
      // A value that is not an object is already a record-not-object finding: one finding per fault.
      if (isPlainObject(rec.value)) out.issues.push({ rule: 'tokens-no-text', message: 'No text to count: the record has no turns, no pair sides and no string field.', pointer: '' });
      return;
    }
    const t = countReading(reading, counter);
    out.tokens = t.content;
    out.length = t.length;
    out.prompt = t.prompt;
    out.response = t.response;
    if (t.length > config.contextLength) {
      const which = reading.sequences.length > 1 ? ` in its longest sequence (${t.longest})` : '';
      out.issues.push({
        rule: 'tokens-over-context',
        message: `The record has ${t.length} tokens${which} (${config.encoding}), more than the context length of ${config.contextLength}.`,
        pointer: '',
      });
    }
    for (const piece of reading.pieces) {
      const issue = specialTextIssue(piece, config);
      if (issue) out.issues.push(issue);
    }
  },
};
