// A record's tokens: its reading's pieces and sequences counted, and its conversations rendered
// with the model's chat template. Which strings are a record's text is the layout's reading
// (layouts/); this module only counts them. Shared by the tokens check, the reading worker (the
// detail pane's per-turn counts and rendered sequences) and the host.

import type { CheckConfig } from '../config.js';
import { readRecord } from '../layouts/index.js';
import type { Reading } from '../layouts/layout.js';
import { ChatTemplate, conversationOf, type Conversation, type TrainedSpan } from './chatTemplate.js';
import { getTokenizer, type Tokenizer } from './index.js';

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

/** Counts every piece and sequence of a reading. Needs the tokenizer loaded. */
export function countReading(reading: Reading, counter: Pick<Tokenizer, 'count'>): RecordTokens & { perPiece: number[] } {
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
  const counter = getTokenizer(config);
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
  return reading === null ? 0 : countReading(reading, getTokenizer(config)).content;
}

/** One sequence rendered with the chat template: what the model sees and what the loss covers. */
export interface RenderedSequence {
  name: string;
  /** Content tokens of the sequence's pieces. */
  content: number;
  /** The template's error, when it raised one (then `text` is empty and the counts are the content's). */
  error: string | null;
  /** Where the error most likely comes from, when a turn can be named. */
  errorPointer?: string;
  text: string;
  spans: TrainedSpan[];
  /** Tokens of the rendered text (special-token spellings as control tokens). */
  rendered: number;
  /** Tokens inside the trained spans, each span counted on its own. */
  trainable: number;
}

/** Per record figures with a chat template. */
export interface RenderedRecord {
  sequences: RenderedSequence[];
  /** Summed over the sequences (each sequence is fed on its own). */
  rendered: number;
  trainable: number;
  /** The longest rendered sequence. */
  length: number;
  longest: string;
}

const templates = new WeakMap<Tokenizer, ChatTemplate | null>();

/** The tokenizer's compiled chat template, or null when it has none. Throws on a template that does not parse. */
export function chatTemplateOf(tokenizer: Tokenizer): ChatTemplate | null {
  let t = templates.get(tokenizer);
  if (t === undefined) {
    t = tokenizer.chatTemplate ? new ChatTemplate(tokenizer.chatTemplate) : null;
    templates.set(tokenizer, t);
  }
  return t;
}

/**
 * A template that reads a turn's text fails on a turn without any (content null beside tool
 * calls, or absent). The first such turn is named only when turns without text are the cause: the
 * same conversation renders once each of them holds the empty string (one more render, at most).
 */
function bareTurnCause(template: ChatTemplate, conv: Conversation, seq: Reading['sequences'][number]): NonNullable<typeof seq.turns>[number] | undefined {
  const turns = seq.turns ?? [];
  // The turns' messages follow an optional system message (conversationOf).
  const offset = conv.messages.length - turns.length;
  const bare = new Set(turns.flatMap((t, k) => (t.isObject && (t.rawContent === null || !t.contentPresent) ? [offset + k] : [])));
  if (bare.size === 0) return undefined;
  try {
    template.render(conv.messages.map((m, i) => (bare.has(i) ? { ...m, content: '' } : m)), conv.tools);
  } catch {
    // Still fails with text there: not the doing of the turns without any.
    return undefined;
  }
  return turns[Math.min(...bare) - offset];
}

/** Renders every sequence of a reading that is a conversation; null when none is (plain text, evaluation items). */
export function renderReading(reading: Reading, record: unknown, tokenizer: Tokenizer, template: ChatTemplate, perPiece: number[]): RenderedRecord | null {
  const sequences: RenderedSequence[] = [];
  for (const seq of reading.sequences) {
    const conv = conversationOf(reading, seq, record);
    if (conv === null) continue;
    let content = 0;
    for (const i of seq.pieces) content += perPiece[i] ?? 0;
    try {
      const r = template.renderWithSpans(conv);
      let trainable = 0;
      for (const sp of r.spans) trainable += tokenizer.countRendered(r.text.slice(sp.start, sp.end));
      sequences.push({ name: seq.name, content, error: null, text: r.text, spans: r.spans, rendered: tokenizer.countRendered(r.text), trainable });
    } catch (err) {
      let error = (err as Error)?.message ?? String(err);
      const bare = bareTurnCause(template, conv, seq);
      if (bare) error += ` (turn ${bare.index + 1} has ${bare.rawContent === null ? 'null content' : 'no content'}; this template expects text there)`;
      sequences.push({ name: seq.name, content, error, errorPointer: bare ? (bare.rawContent === null ? bare.contentPointer : bare.pointer) : undefined, text: '', spans: [], rendered: content, trainable: 0 });
    }
  }
  if (sequences.length === 0) return null;
  let length = -1;
  let longest = sequences[0]!.name;
  let rendered = 0;
  let trainable = 0;
  for (const s of sequences) {
    rendered += s.rendered;
    trainable += s.trainable;
    if (s.rendered > length) [length, longest] = [s.rendered, s.name];
  }
  return { sequences, rendered, trainable, length, longest };
}

/** What the detail pane shows of a record with a chat template: each sequence rendered, its trained spans. Needs the tokenizer loaded. */
export function renderedRecord(value: unknown, config: CheckConfig): RenderedRecord | null {
  const tokenizer = getTokenizer(config);
  const template = chatTemplateOf(tokenizer);
  const reading = readRecord(value, config);
  if (template === null || reading === null) return null;
  return renderReading(reading, value, tokenizer, template, countReading(reading, tokenizer).perPiece);
}
