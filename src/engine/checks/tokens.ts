// The tokens family: each record's token count under the configured tokenizer, its rendered and
// trained tokens where the model has a chat template, records that overflow the context window,
// and text that spells a special token.

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import { findChatMarkerText, findSpecialTokenText, spellingFinder, type SpecialTokenHit } from '../tokens/counter.js';
import { getTokenizer, loadTokenizer, tokenizerOf, type Tokenizer } from '../tokens/index.js';
import { ChatTemplate, conversationOf, type TrainedSpan } from '../tokens/chatTemplate.js';
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
    summary: "Text spells a special token of the encoding (counted as ordinary text), or a control token of the model (read as that token).",
  },
  {
    id: 'tokens-no-text',
    family: 'tokens',
    severity: 'info',
    summary: 'The record holds no text to count (no turns, no pair sides, no string field).',
  },
  {
    id: 'tokens-template-error',
    family: 'tokens',
    severity: 'error',
    summary: "The model's chat template raises an error on the record's conversation, or cannot render a value it holds (a null or a list where the template wants text).",
  },
  {
    id: 'tokens-rendered-over-context',
    family: 'tokens',
    severity: 'warning',
    summary: 'The conversation rendered with the chat template (its longest sequence) has more tokens than the context length.',
  },
  {
    id: 'tokens-no-trainable',
    family: 'tokens',
    severity: 'warning',
    summary: 'The rendered conversation has no trained token: no assistant turn inside the loss.',
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
      // A template that reads a turn's text fails on a turn without any (content null beside tool
      // calls, or absent): name that turn, the likeliest cause.
      const bare = /null|undefined|none/i.test(error) ? seq.turns?.find((t) => t.isObject && (t.rawContent === null || !t.contentPresent)) : undefined;
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

const modelFinders = new WeakMap<Tokenizer, (text: string) => SpecialTokenHit[]>();

function specialTextIssue(unit: TextPiece, tokenizer: Tokenizer): RecordIssue | null {
  if (tokenizer.kind === 'model') {
    let find = modelFinders.get(tokenizer);
    if (!find) modelFinders.set(tokenizer, (find = spellingFinder(Object.keys(tokenizer.specialTokens))));
    const hits = find(unit.text);
    if (hits.length === 0) return null;
    const names = [...new Set(hits.map((h) => h.token))].map((n) => `"${n}"`).join(', ');
    return {
      rule: 'tokens-special-text',
      message:
        `Text spells the control token${hits.length > 1 ? 's' : ''} ${names} of ${tokenizer.label} (${hits.length === 1 ? 'once' : `${hits.length} times`}); ` +
        "the model's tokenizer reads a control token there, not the text.",
      pointer: unit.pointer,
    };
  }
  const encoding = tokenizer.name as Parameters<typeof findSpecialTokenText>[1];
  const hits = findSpecialTokenText(unit.text, encoding);
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
      `Text spells the ${encoding} special token${names.length > 1 ? 's' : ''} ${spelled} (${times}); ` +
      'it is counted as ordinary text, but a trainer that encodes special tokens would read a control token here.',
    pointer: unit.pointer,
  };
}

export const tokensCheck: Check = {
  name: 'tokens',
  rules: TOKENS_RULES,

  async prepare(config: CheckConfig): Promise<void> {
    // A template that does not parse is a setup problem, said once, not a finding on every record.
    chatTemplateOf(await loadTokenizer(tokenizerOf(config)));
  },

  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const tokenizer = getTokenizer(config);
    const template = chatTemplateOf(tokenizer);
    const reading = readRecord(rec.value, config);
    if (reading === null) {
      out.tokens = 0;
      if (template) out.rendered = out.trainable = 0;
      // A value that is not an object is already a record-not-object finding: one finding per fault.
      if (isPlainObject(rec.value)) out.issues.push({ rule: 'tokens-no-text', message: 'No text to count: the record has no turns, no pair sides and no string field.', pointer: '' });
      return;
    }
    const t = countReading(reading, tokenizer);
    out.tokens = t.content;
    out.length = t.length;
    out.prompt = t.prompt;
    out.response = t.response;
    const rendered = template ? renderReading(reading, rec.value, tokenizer, template, t.perPiece) : null;
    if (template) {
      // A record that is no conversation is fed as it is: all of it seen, its response side trained.
      out.rendered = rendered?.rendered ?? t.content;
      out.trainable = rendered?.trainable ?? t.response;
    }
    if (rendered) {
      out.length = rendered.length;
      const where = reading.turnLists[0]?.pointer ?? '';
      const many = rendered.sequences.length > 1;
      for (const s of rendered.sequences) {
        const which = many ? ` (${s.name})` : '';
        if (s.error !== null) {
          out.issues.push({
            rule: 'tokens-template-error',
            message: `The chat template (${template!.spec.origin}) could not render this conversation${which}: ${s.error}. Its tokens are counted by content alone.`,
            pointer: s.errorPointer ?? where,
          });
        } else if (s.trainable === 0) {
          out.issues.push({
            rule: 'tokens-no-trainable',
            message: `No token of the rendered conversation${which} is trained: it has no assistant turn inside the loss (${s.rendered} tokens rendered).`,
            pointer: where,
          });
        }
      }
      if (rendered.length > config.contextLength) {
        const which = many ? ` in its longest sequence (${rendered.longest})` : '';
        out.issues.push({
          rule: 'tokens-rendered-over-context',
          message: `Rendered with the chat template, the record has ${rendered.length} tokens${which} (${tokenizer.label}; ${t.content} of content), more than the context length of ${config.contextLength}.`,
          pointer: '',
        });
      }
    } else if (t.length > config.contextLength) {
      const which = reading.sequences.length > 1 ? ` in its longest sequence (${t.longest})` : '';
      out.issues.push({
        rule: 'tokens-over-context',
        message: `The record has ${t.length} tokens${which} (${tokenizer.label}), more than the context length of ${config.contextLength}.`,
        pointer: '',
      });
    }
    for (const piece of reading.pieces) {
      const issue = specialTextIssue(piece, tokenizer);
      if (issue) out.issues.push(issue);
    }
  },
};
