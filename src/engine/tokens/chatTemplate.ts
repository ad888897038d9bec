// Chat templates: a model's Jinja template rendered with `@huggingface/jinja` (which lexes with
// trim_blocks and lstrip_blocks on, as the template authors' Python library does), the template's
// special tokens from tokenizer_config.json, and `add_generation_prompt: false`. The spans of the
// rendered text that the loss covers are found by rendering prefixes of the conversation.

import { Template } from '@huggingface/jinja';
import type { LTurn, Reading, Sequence } from '../layouts/layout.js';
import { isPlainObject } from '../layouts/turnReader.js';
import { TokenizerError } from './tokenizer.js';

/** A model's chat template as its folder holds it. */
export interface ChatTemplateSpec {
  /** The Jinja source. */
  source: string;
  /** Which file it came from: `chat_template.jinja`, `chat_template.json` or `tokenizer_config.json`. */
  origin: string;
  /** `bos_token`, `eos_token` … and `additional_special_tokens`, as the template sees them. */
  specials: Record<string, unknown>;
}

/** One message as a template reads it (the role/content form of the model-hub library). */
export interface ChatMessage {
  role: string;
  content?: string | null | Record<string, unknown>[];
  tool_calls?: { type: 'function'; id?: string; function: { name: string; arguments: unknown } }[];
  tool_call_id?: string;
  reasoning_content?: string;
}

/** A conversation ready to render, with which messages the loss covers. */
export interface Conversation {
  messages: ChatMessage[];
  /** Per message: inside the loss (an assistant turn not excluded by a flag, not part of a pair's prompt). */
  trained: boolean[];
  tools?: unknown[];
}

/** A span of the rendered text the loss covers, in UTF-16 offsets, and the message it renders. */
export interface TrainedSpan {
  start: number;
  end: number;
  message: number;
}

export interface RenderedConversation {
  text: string;
  spans: TrainedSpan[];
}

/** Marks written where a template's `{% generation %}` and `{% endgeneration %}` tags stand (private-use characters). */
const GEN_OPEN = '\uE000\uE001';
const GEN_CLOSE = '\uE001\uE000';
const GENERATION_TAG = /\{%(-?)\s*(end)?generation\s*(-?)%\}/g;

export class ChatTemplate {
  private readonly template: Template;
  /** The template with its generation tags writing marks instead, when it has such tags. */
  private readonly marked: Template | null = null;

  constructor(readonly spec: ChatTemplateSpec) {
    try {
      this.template = new Template(spec.source);
    } catch (err) {
      throw new TokenizerError(`The chat template (${spec.origin}) does not parse: ${(err as Error).message}`);
    }
    if (/\{%-?\s*generation\s*-?%\}/.test(spec.source)) {
      // Each tag becomes a block that writes a mark, keeping the tag's white-space control (and,
      // being block tags too, trim_blocks and lstrip_blocks treat them as they treat the tag).
      const source = spec.source.replace(GENERATION_TAG, (_, l: string, end: string | undefined, r: string) => `{%${l} if true %}{{ "${end ? GEN_CLOSE : GEN_OPEN}" }}{% endif ${r}%}`);
      try {
        this.marked = new Template(source);
      } catch {
        this.marked = null;
      }
    }
  }

  /** Renders messages; throws the template's own error (a `raise_exception`, a type error …). */
  render(messages: readonly ChatMessage[], tools: unknown[] | undefined, addGenerationPrompt = false): string {
    const context: Record<string, unknown> = { ...this.spec.specials, messages, add_generation_prompt: addGenerationPrompt };
    if (tools !== undefined && tools.length > 0) context.tools = tools;
    return this.template.render(context);
  }

  /**
   * Renders the conversation and finds each trained message's span: it starts where the rendering
   * of the messages before it with a generation prompt ends, and ends where the rendering through
   * it ends (less what the template writes after any conversation, such as a header for the next
   * answer). Templates that render an earlier turn differently once later turns follow (reasoning
   * dropped from past turns) are aligned by the longest tail of the prefix found in the text.
   * A template with generation tags marks the spans itself.
   */
  renderWithSpans(conv: Conversation): RenderedConversation {
    const text = this.render(conv.messages, conv.tools);
    const marked = this.markedSpans(conv, text);
    if (marked) return { text, spans: marked };
    const spans: TrainedSpan[] = [];
    let floor = 0;
    conv.messages.forEach((_, i) => {
      if (!conv.trained[i]) return;
      const before = conv.messages.slice(0, i);
      let start = floor;
      const withPrompt = this.tryRender(before, conv.tools, true);
      if (withPrompt !== null && text.startsWith(withPrompt)) start = withPrompt.length;
      else {
        const plain = this.tryRender(before, conv.tools, false);
        if (plain !== null && text.startsWith(plain)) start = plain.length;
        else if (withPrompt !== null) start = commonPrefix(text, withPrompt);
      }
      start = Math.max(start, floor);
      let through = this.tryRender(conv.messages.slice(0, i + 1), conv.tools, false);
      // What a template writes after every conversation, however short (a header for the next answer), is not the turn's.
      const trailer = this.trailer();
      if (through !== null && trailer !== '' && through.endsWith(trailer)) through = through.slice(0, through.length - trailer.length);
      let end = start;
      if (through !== null) end = text.startsWith(through) ? through.length : alignTail(text, through, start);
      end = Math.min(Math.max(end, start), text.length);
      if (end > start) spans.push({ start, end, message: i });
      floor = end;
    });
    return { text, spans };
  }

  /**
   * The spans a template's generation tags mark, one per assistant message in order; null when
   * the template has none, or when the marks do not line up with the assistant messages (then
   * the prefixes decide).
   */
  private markedSpans(conv: Conversation, text: string): TrainedSpan[] | null {
    if (!this.marked) return null;
    let out: string;
    try {
      out = this.marked.render({ ...this.spec.specials, messages: conv.messages, add_generation_prompt: false, ...(conv.tools?.length ? { tools: conv.tools } : {}) });
    } catch {
      return null;
    }
    const found: { start: number; end: number }[] = [];
    let plain = '';
    let open = -1;
    let at = 0;
    for (;;) {
      const o = out.indexOf(GEN_OPEN, at);
      const c = out.indexOf(GEN_CLOSE, at);
      const next = o < 0 ? c : c < 0 ? o : Math.min(o, c);
      if (next < 0) break;
      plain += out.slice(at, next);
      if (next === o) {
        if (open >= 0) return null;
        open = plain.length;
      } else {
        if (open < 0) return null;
        found.push({ start: open, end: plain.length });
        open = -1;
      }
      at = next + GEN_OPEN.length;
    }
    plain += out.slice(at);
    // The marks must not have changed the text, and must stand around the assistant turns.
    const assistants = conv.messages.map((m, i) => (m.role === 'assistant' ? i : -1)).filter((i) => i >= 0);
    if (open >= 0 || plain !== text || found.length !== assistants.length) return null;
    return found.map((f, k) => ({ ...f, message: assistants[k]! })).filter((f) => conv.trained[f.message] && f.end > f.start);
  }

  private trailerText: string | null = null;

  /** The rendering of an empty conversation: what the template writes whatever the turns (empty for most). */
  private trailer(): string {
    if (this.trailerText === null) {
      const empty = this.tryRender([], undefined, false) ?? '';
      // Only the part after the start-of-sequence token: that one opens the text, it does not close it.
      const bos = typeof this.spec.specials.bos_token === 'string' ? this.spec.specials.bos_token : '';
      this.trailerText = bos !== '' && empty.startsWith(bos) ? empty.slice(bos.length) : empty;
    }
    return this.trailerText;
  }

  private tryRender(messages: readonly ChatMessage[], tools: unknown[] | undefined, addGenerationPrompt: boolean): string | null {
    try {
      return this.render(messages, tools, addGenerationPrompt);
    } catch {
      return null;
    }
  }
}

function commonPrefix(a: string, b: string): number {
  const n = Math.min(a.length, b.length);
  let i = 0;
  while (i < n && a.charCodeAt(i) === b.charCodeAt(i)) i++;
  return i;
}

/** Where `rendered`'s part after its common prefix with `text` ends in `text` (at or after `from`). */
function alignTail(text: string, rendered: string, from: number): number {
  const tail = rendered.slice(commonPrefix(text, rendered));
  // A suffix found at or after `from` has every shorter suffix found there too: binary search its length.
  let lo = 0;
  let hi = tail.length;
  let at = from;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    const i = text.indexOf(tail.slice(tail.length - mid), from);
    if (i >= 0) {
      lo = mid;
      at = i + mid;
    } else hi = mid - 1;
  }
  return lo === 0 ? from : at;
}

/** Layouts whose records are not conversations a chat template renders (pre-training text, evaluation prompts). */
const NOT_CHATS = new Set(['text', 'eval']);

/** A turn as a template message: its text (or its parts where it holds media), calls, reasoning. */
export function messageOfTurn(t: LTurn): ChatMessage {
  const m: ChatMessage = { role: t.role ?? (typeof t.rawRole === 'string' ? t.rawRole : 'user') };
  const hasMedia = t.parts.some((p) => p.kind === 'media');
  if (hasMedia) {
    m.content = t.parts.flatMap((p): Record<string, unknown>[] =>
      p.kind === 'text' ? [{ type: 'text', text: p.text }] : p.kind === 'media' ? [{ type: p.media }] : [],
    );
  } else if (typeof t.rawContent === 'string') m.content = t.rawContent;
  else if (Array.isArray(t.rawContent)) m.content = t.text;
  else if (t.rawContent === null) m.content = null;
  // A speaker list's call turn holds the call in its content string (kept above); other calls go in tool_calls.
  const calls = t.parts.filter((p): p is Extract<LTurn['parts'][number], { kind: 'tool-call' }> => p.kind === 'tool-call' && p.pointer !== t.contentPointer);
  if (calls.length > 0) {
    m.tool_calls = calls.map((c) => ({ type: 'function' as const, ...(c.id !== null ? { id: c.id } : {}), function: { name: c.name, arguments: c.arguments ?? {} } }));
  }
  if (t.toolCallId !== null) m.tool_call_id = t.toolCallId;
  const reasoning = t.parts.filter((p) => p.kind === 'reasoning' && /\/(reasoning_content|reasoning|thinking)$/.test(p.pointer));
  if (reasoning.length > 0) m.reasoning_content = reasoning.map((p) => (p as { text: string }).text).join('\n');
  return m;
}

/**
 * The conversation a sequence feeds, as template messages: its turns (a system string beside them
 * first), or for string layouts (instruction, prompt/completion, pairs of strings) its pieces, the
 * prompt side as user turns and the response side as assistant turns (common practice of trainers
 * that render such records through a chat template). Null where the record is not a conversation.
 */
export function conversationOf(reading: Reading, seq: Sequence, record: unknown): Conversation | null {
  if (NOT_CHATS.has(reading.layout)) return null;
  const messages: ChatMessage[] = [];
  const trained: boolean[] = [];
  const system = seq.pieces.map((i) => reading.pieces[i]!).find((p) => p.pointer === '/system');
  if (seq.turns) {
    if (system) {
      messages.push({ role: 'system', content: system.text });
      trained.push(false);
    }
    // Turns of a pair's or a completion's prompt condition the answer; only the answer is trained.
    const promptTurns = new Set(reading.turnLists.filter((l) => l.role === 'prompt').flatMap((l) => l.turns.map((t) => t.pointer)));
    for (const t of seq.turns) {
      messages.push(messageOfTurn(t));
      trained.push(t.role === 'assistant' && t.trainable !== false && !promptTurns.has(t.pointer));
    }
  } else {
    for (const i of seq.pieces) {
      const p = reading.pieces[i]!;
      const role = p.pointer === '/system' ? 'system' : p.side === 'prompt' ? 'user' : 'assistant';
      const last = messages[messages.length - 1];
      // An instruction and its input are one user turn (common practice: joined by a blank line).
      if (last && last.role === role && role !== 'system') last.content = `${String(last.content)}\n\n${p.text}`;
      else {
        messages.push({ role, content: p.text });
        trained.push(role === 'assistant');
      }
    }
  }
  if (messages.length === 0) return null;
  const tools = reading.toolsPointer && isPlainObject(record) && Array.isArray(record.tools) ? (record.tools as unknown[]) : undefined;
  return tools ? { messages, trained, tools } : { messages, trained };
}
