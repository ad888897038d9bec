// Reads one turn of a conversation as the trade writes it (common practice, no single standard):
// `role`/`content` (OpenAI-style chat messages) or `from`/`value` (speaker lists), content as a
// string, null (with tool calls) or a list of parts, tool calls, reasoning, media and loss flags.

import { joinPointer } from '../findings.js';
import type { LayoutFields, LTurn, Part, Side, TextPiece } from './layout.js';

export function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

export function has(obj: Record<string, unknown>, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(obj, key);
}

/**
 * Speaker names mapped onto roles (common practice). `function_call` is the assistant calling a
 * tool; `observation`, `function` and `ipython` are tool results; `prompter` and `model` are the
 * user and the assistant in other writers' lists; `developer` stands where `system` used to.
 */
export const ROLE_MAP: Readonly<Record<string, string>> = {
  human: 'user',
  user: 'user',
  prompter: 'user',
  gpt: 'assistant',
  assistant: 'assistant',
  model: 'assistant',
  function_call: 'assistant',
  system: 'system',
  developer: 'system',
  observation: 'tool',
  tool: 'tool',
  function: 'tool',
  ipython: 'tool',
};

const ROLE_KEYS = ['role', 'from'];
const CONTENT_KEYS = ['content', 'value', 'text'];

function firstKey(obj: Record<string, unknown>, keys: readonly string[]): string | null {
  for (const k of keys) if (has(obj, k)) return k;
  return null;
}

const MEDIA_TYPES: Readonly<Record<string, 'image' | 'audio' | 'video' | 'file'>> = {
  image: 'image',
  image_url: 'image',
  input_image: 'image',
  audio: 'audio',
  input_audio: 'audio',
  audio_url: 'audio',
  video: 'video',
  video_url: 'video',
  file: 'file',
  input_file: 'file',
  document: 'file',
};

const TEXT_TYPES = new Set(['text', 'input_text', 'output_text']);
const REASONING_TYPES = new Set(['reasoning', 'thinking']);
const CALL_TYPES = new Set(['tool_call', 'tool_use', 'function_call']);

/** A `data:` URL split into its MIME type and base64 payload; null when it is not one. */
export function parseDataUrl(url: string): { mime: string | null; base64: string } | null {
  const m = /^data:([^;,]*)((?:;[^;,]*)*);base64,/i.exec(url.slice(0, 200));
  if (!m) return null;
  return { mime: m[1] || null, base64: url.slice(m[0].length) };
}

/** Where a media value points, or the bytes it holds: a string (URL, path or data URL) or an object. */
export function readMediaValue(v: unknown): { location: string | null; base64: string | null; mime: string | null } {
  if (typeof v === 'string') {
    const d = parseDataUrl(v);
    if (d) return { location: null, base64: d.base64, mime: d.mime };
    return { location: v, base64: null, mime: null };
  }
  if (isPlainObject(v)) {
    for (const k of ['url', 'path', 'image_url', 'file_path', 'uri']) {
      const inner = v[k];
      if (typeof inner === 'string' && inner !== '') return readMediaValue(inner);
      if (isPlainObject(inner)) return readMediaValue(inner);
    }
    for (const k of ['data', 'bytes', 'b64_json', 'file_data']) {
      const inner = v[k];
      if (typeof inner === 'string' && inner !== '') {
        const d = parseDataUrl(inner);
        const mime = typeof v.format === 'string' ? v.format : typeof v.mime_type === 'string' ? v.mime_type : null;
        return d ? { location: null, base64: d.base64, mime: d.mime } : { location: null, base64: inner, mime };
      }
    }
  }
  return { location: null, base64: null, mime: null };
}

function mediaPart(part: Record<string, unknown>, pointer: string, media: 'image' | 'audio' | 'video' | 'file'): Part {
  const type = String(part.type);
  // The value sits under the type's own key (`image_url: {url}`, `image: "…"`), or flat on the part.
  const own = has(part, type) ? part[type] : part;
  const read = readMediaValue(own);
  const fallback = read.location === null && read.base64 === null && own !== part ? readMediaValue(part) : read;
  return { kind: 'media', pointer, media, ...fallback };
}

function callPart(call: Record<string, unknown>, pointer: string): Part | null {
  // OpenAI-style `{id, type: "function", function: {name, arguments}}`, or flat `{name, arguments}`.
  const fn = isPlainObject(call.function) ? call.function : call;
  const fnPointer = fn === call ? pointer : joinPointer(pointer, 'function');
  // An entry with neither a name nor arguments calls nothing.
  if (typeof fn.name !== 'string' && !['arguments', 'input', 'parameters'].some((k) => has(fn, k))) return null;
  const name = typeof fn.name === 'string' ? fn.name : '';
  const argKey = has(fn, 'arguments') ? 'arguments' : has(fn, 'input') ? 'input' : has(fn, 'parameters') ? 'parameters' : 'arguments';
  return {
    kind: 'tool-call',
    pointer,
    id: typeof call.id === 'string' ? call.id : null,
    name,
    namePointer: joinPointer(fnPointer, 'name'),
    arguments: fn[argKey],
    argumentsPointer: joinPointer(fnPointer, argKey),
  };
}

/** The parts of a content value: a string is one text part; a list is read item by item. */
export function readParts(content: unknown, pointer: string): Part[] {
  if (typeof content === 'string') return [{ kind: 'text', pointer, text: content }];
  if (!Array.isArray(content)) return [];
  const parts: Part[] = [];
  content.forEach((item, i) => {
    const p = joinPointer(pointer, i);
    if (typeof item === 'string') {
      parts.push({ kind: 'text', pointer: p, text: item });
      return;
    }
    if (!isPlainObject(item)) return;
    const type = typeof item.type === 'string' ? item.type : undefined;
    const textKey = has(item, 'text') ? 'text' : has(item, 'value') ? 'value' : null;
    if (type === undefined || TEXT_TYPES.has(type)) {
      if (textKey !== null || TEXT_TYPES.has(type ?? '')) {
        const t = textKey !== null ? item[textKey] : undefined;
        parts.push({ kind: 'text', pointer: textKey !== null ? joinPointer(p, textKey) : p, text: typeof t === 'string' ? t : '' });
        return;
      }
      if (type === undefined) {
        // A part with no type: media by its keys (`{"image": "…"}`), else unknown.
        for (const k of Object.keys(MEDIA_TYPES)) {
          if (has(item, k)) {
            parts.push({ kind: 'media', pointer: p, media: MEDIA_TYPES[k], ...readMediaValue(item[k]) });
            return;
          }
        }
        parts.push({ kind: 'unknown', pointer: p, type: '(no type)' });
        return;
      }
    }
    if (type !== undefined && REASONING_TYPES.has(type)) {
      const key = ['text', 'thinking', 'reasoning', 'content', 'value'].find((k) => typeof item[k] === 'string');
      parts.push({ kind: 'reasoning', pointer: key ? joinPointer(p, key) : p, text: key ? (item[key] as string) : '' });
      return;
    }
    if (type !== undefined && CALL_TYPES.has(type)) {
      const call = callPart(item, p);
      if (call) parts.push(call);
      return;
    }
    if (type === 'tool_result') {
      // A tool's answer carried as a part: its content is text (or a list of parts).
      const inner = has(item, 'content') ? 'content' : 'text';
      parts.push(...readParts(item[inner], joinPointer(p, inner)));
      return;
    }
    if (type !== undefined && MEDIA_TYPES[type] !== undefined) {
      parts.push(mediaPart(item, p, MEDIA_TYPES[type]));
      return;
    }
    parts.push({ kind: 'unknown', pointer: p, type: type ?? '(no type)' });
  });
  return parts;
}

/** A per-turn flag that takes a turn out of the loss (common practice: `train`, `weight`, `loss`, `trainable`). */
function trainFlag(turn: Record<string, unknown>): boolean | null {
  for (const k of ['train', 'trainable', 'loss']) {
    const v = turn[k];
    if (typeof v === 'boolean') return v;
    if (typeof v === 'number') return v > 0;
  }
  const w = turn.weight ?? turn.loss_weight;
  if (typeof w === 'number') return w > 0;
  if (typeof w === 'boolean') return w;
  return null;
}

function emptyTurn(index: number, pointer: string): LTurn {
  return {
    index,
    pointer,
    role: null,
    rawRole: undefined,
    rolePointer: pointer,
    text: '',
    contentPointer: pointer,
    contentPresent: false,
    rawContent: undefined,
    parts: [],
    toolCallIds: [],
    toolCallId: null,
    hasToolCalls: false,
    isObject: false,
    trainable: null,
  };
}

/** Reads one list item as a turn. */
export function readTurn(raw: unknown, index: number, pointer: string, fields: LayoutFields = {}): LTurn {
  if (!isPlainObject(raw)) return emptyTurn(index, pointer);
  const roleKey = firstKey(raw, [...(fields.role ?? []), ...ROLE_KEYS]) ?? fields.role?.[0] ?? 'role';
  const contentKey = firstKey(raw, [...(fields.content ?? []), ...CONTENT_KEYS]) ?? fields.content?.[0] ?? 'content';
  const rawRole = raw[roleKey];
  const role = typeof rawRole === 'string' ? (ROLE_MAP[rawRole] ?? rawRole) : null;
  const contentPointer = joinPointer(pointer, contentKey);
  const rawContent = raw[contentKey];
  let parts: Part[];
  if (rawRole === 'function_call' && typeof rawContent === 'string') {
    // A speaker list's call turn holds the call as a JSON string: `{"name": …, "arguments": …}`.
    parts = [callFromString(rawContent, contentPointer)];
  } else {
    parts = readParts(rawContent, contentPointer);
  }

  const toolCallIds: string[] = [];
  let hasToolCalls = rawRole === 'function_call';
  if (Array.isArray(raw.tool_calls)) {
    if (raw.tool_calls.length > 0) hasToolCalls = true;
    raw.tool_calls.forEach((call, i) => {
      if (!isPlainObject(call)) return;
      const part = callPart(call, joinPointer(joinPointer(pointer, 'tool_calls'), i));
      if (part) parts.push(part);
      if (typeof call.id === 'string') toolCallIds.push(call.id);
    });
  } else if (isPlainObject(raw.function_call)) {
    // The older single-call form: an assistant turn carrying one `function_call` object.
    const part = callPart(raw.function_call, joinPointer(pointer, 'function_call'));
    if (part) parts.push(part);
  }
  for (const p of parts) if (p.kind === 'tool-call') hasToolCalls = true;
  for (const key of ['reasoning_content', 'reasoning', 'thinking']) {
    if (typeof raw[key] === 'string' && raw[key] !== '') parts.unshift({ kind: 'reasoning', pointer: joinPointer(pointer, key), text: raw[key] as string });
  }
  const text = parts
    .filter((p): p is Extract<Part, { kind: 'text' }> => p.kind === 'text')
    .map((p) => p.text)
    .join('\n');
  return {
    index,
    pointer,
    role,
    rawRole,
    rolePointer: joinPointer(pointer, roleKey),
    text,
    contentPointer,
    contentPresent: has(raw, contentKey),
    rawContent,
    parts,
    toolCallIds,
    toolCallId: typeof raw.tool_call_id === 'string' ? raw.tool_call_id : null,
    hasToolCalls,
    isObject: true,
    trainable: trainFlag(raw),
  };
}

function callFromString(text: string, pointer: string): Part {
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    parsed = undefined;
  }
  const obj = isPlainObject(parsed) ? parsed : {};
  return {
    kind: 'tool-call',
    pointer,
    id: null,
    name: typeof obj.name === 'string' ? obj.name : '',
    // The whole string is what the model reads: it is counted once, as the arguments' piece.
    namePointer: pointer,
    arguments: text,
    argumentsPointer: pointer,
  };
}

/** Reads every item of a list as a turn. */
export function readTurns(list: readonly unknown[], basePointer: string, fields: LayoutFields = {}): LTurn[] {
  return list.map((item, i) => readTurn(item, i, joinPointer(basePointer, i), fields));
}

/** Which side a turn's text is on: the assistant's turns are trained on; the rest conditions them. */
export function sideOfRole(role: string | null): Side {
  return role === 'assistant' ? 'response' : 'prompt';
}

/** The text pieces of a turn, each string on its own: text, reasoning, each call's name and arguments. */
export function turnPieces(turn: LTurn, side: Side = sideOfRole(turn.role)): TextPiece[] {
  const out: TextPiece[] = [];
  for (const p of turn.parts) {
    if (p.kind === 'text' || p.kind === 'reasoning') out.push({ pointer: p.pointer, text: p.text, side, kind: p.kind });
    else if (p.kind === 'tool-call') {
      if (p.namePointer !== p.argumentsPointer && p.name !== '') out.push({ pointer: p.namePointer, text: p.name, side, kind: 'tool-name' });
      const args = typeof p.arguments === 'string' ? p.arguments : p.arguments === undefined ? '' : JSON.stringify(p.arguments);
      if (args !== '') out.push({ pointer: p.argumentsPointer, text: args, side, kind: 'tool-arguments' });
    }
  }
  return out;
}

/**
 * A whole transcript in one string with `\n\nHuman:` / `\n\nAssistant:` markers (common practice of
 * early preference sets), parsed into turns. Null when the string is not such a transcript.
 */
export function parseTranscript(text: string, pointer: string): LTurn[] | null {
  if (!/(^|\n\n)Human:/.test(text) || !/\n\nAssistant:/.test(text)) return null;
  const re = /(?:^|\n\n)(Human|Assistant):/g;
  const marks: { role: string; start: number; end: number }[] = [];
  for (let m = re.exec(text); m !== null; m = re.exec(text)) marks.push({ role: m[1] === 'Human' ? 'user' : 'assistant', start: m.index, end: m.index + m[0].length });
  const turns: LTurn[] = [];
  marks.forEach((mark, i) => {
    const body = text.slice(mark.end, i + 1 < marks.length ? marks[i + 1].start : text.length).replace(/^ /, '');
    turns.push({
      ...emptyTurn(i, pointer),
      role: mark.role,
      rawRole: mark.role === 'user' ? 'Human' : 'Assistant',
      text: body,
      contentPointer: pointer,
      contentPresent: true,
      rawContent: body,
      parts: [{ kind: 'text', pointer, text: body }],
      isObject: true,
    });
  });
  return turns.length > 0 ? turns : null;
}
