// Reads chat records and preference pairs out of plain JSON values, so that the chat, pair and
// token checks all see the same turns. Layouts here are common practice, not a published standard.

import type { CheckConfig } from '../config.js';
import { joinPointer } from '../findings.js';

export interface Turn {
  /** 0-based position in its list. */
  index: number;
  /** RFC 6901 pointer to the turn inside the record, e.g. `/messages/3`. */
  pointer: string;
  /** Role after mapping (`human` → `user` …); null when missing or not a string. */
  role: string | null;
  /** The role value as written (undefined when the key is absent). */
  rawRole: unknown;
  /** The turn's text: the string content, or the text parts of a list of parts joined by newlines. */
  text: string;
  /** Pointer to the content value (or where it would be when missing). */
  contentPointer: string;
  /** An assistant turn that calls tools (`tool_calls` list, or a `function_call` object). */
  hasToolCalls: boolean;
  /** The string ids of the calls this turn makes. */
  toolCallIds: string[];
  /** The call a tool turn answers (`tool_call_id`), or null. */
  toolCallId: string | null;
  /** False when the list item is not a JSON object (then every other field is empty). */
  isObject: boolean;
}

export interface Conversation {
  /** The record key holding the turns: `messages` or `conversations`. */
  field: string;
  /** Pointer to that key, e.g. `/messages`. */
  pointer: string;
  /** Empty when the field is present but not a list (the chat check reports that). */
  turns: Turn[];
  convention: 'messages' | 'conversations';
}

export interface PairSide {
  pointer: string;
  /** The side's text; for a list of turns, every turn's text joined by newlines. */
  text: string;
  /** The side's turns when it is a list of turns (or one turn object); null for plain text. */
  turns: Turn[] | null;
}

export interface PreferencePair {
  prompt: PairSide | null;
  chosen: PairSide | null;
  rejected: PairSide | null;
}

/**
 * Speaker names of the `conversations` layout (common practice) mapped onto roles.
 * `function_call` and `observation` are both the tool side of an exchange, so both become `tool`.
 */
export const CONVERSATIONS_ROLE_MAP: Readonly<Record<string, string>> = {
  human: 'user',
  user: 'user',
  gpt: 'assistant',
  assistant: 'assistant',
  system: 'system',
  function_call: 'tool',
  observation: 'tool',
  tool: 'tool',
};

/** Keys that make a record a preference pair rather than a conversation. */
export const PAIR_KEYS = ['chosen', 'rejected'] as const;

export function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function has(obj: Record<string, unknown>, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(obj, key);
}

/** True when the record carries `chosen` or `rejected`: it is then read as a pair, not a chat. */
export function isPairRecord(value: unknown): boolean {
  return isPlainObject(value) && PAIR_KEYS.some((k) => has(value, k));
}

/** Which key of a turn object holds the role and which the content (`role`/`content` wins over `from`/`value`). */
function turnKeys(turn: Record<string, unknown>): { roleKey: string; contentKey: string } {
  const roleKey = has(turn, 'role') || !has(turn, 'from') ? 'role' : 'from';
  const contentKey = has(turn, 'content') || !has(turn, 'value') ? 'content' : 'value';
  return { roleKey, contentKey };
}

/** Text of a content value: strings as they are, text parts of a list joined by newlines, anything else ''. */
export function contentText(content: unknown): string {
  if (typeof content === 'string') return content;
  if (!Array.isArray(content)) return '';
  const texts: string[] = [];
  for (const part of content) {
    if (typeof part === 'string') texts.push(part);
    else if (isPlainObject(part) && (part.type === 'text' || part.type === undefined) && typeof part.text === 'string') {
      texts.push(part.text);
    }
  }
  return texts.join('\n');
}

/** A list of parts holding at least one part that is not text (an image, audio …): legal without text. */
export function hasNonTextPart(content: unknown): boolean {
  if (!Array.isArray(content)) return false;
  return content.some((p) => isPlainObject(p) && typeof p.type === 'string' && p.type !== 'text');
}

/** The raw content value of a turn object and whether the key was present. */
export function rawContent(turn: unknown): { present: boolean; value: unknown } {
  if (!isPlainObject(turn)) return { present: false, value: undefined };
  const { contentKey } = turnKeys(turn);
  return { present: has(turn, contentKey), value: turn[contentKey] };
}

/** Reads one list item as a turn. `mapRoles` applies the `conversations` speaker names. */
export function readTurn(raw: unknown, index: number, pointer: string, mapRoles: boolean): Turn {
  if (!isPlainObject(raw)) {
    return {
      index,
      pointer,
      role: null,
      rawRole: undefined,
      text: '',
      contentPointer: pointer,
      hasToolCalls: false,
      toolCallIds: [],
      toolCallId: null,
      isObject: false,
    };
  }
  const { roleKey, contentKey } = turnKeys(raw);
  const rawRole = raw[roleKey];
  let role: string | null = null;
  if (typeof rawRole === 'string') {
    role = mapRoles || roleKey === 'from' ? (CONVERSATIONS_ROLE_MAP[rawRole] ?? rawRole) : rawRole;
  }
  const toolCallIds: string[] = [];
  let hasToolCalls = false;
  if (Array.isArray(raw.tool_calls) && raw.tool_calls.length > 0) {
    hasToolCalls = true;
    for (const call of raw.tool_calls) {
      if (isPlainObject(call) && typeof call.id === 'string') toolCallIds.push(call.id);
    }
  } else if (isPlainObject(raw.function_call)) {
    // The older single-call layout: an assistant turn carrying one `function_call` object.
    hasToolCalls = true;
  }
  return {
    index,
    pointer,
    role,
    rawRole,
    text: contentText(raw[contentKey]),
    contentPointer: joinPointer(pointer, contentKey),
    hasToolCalls,
    toolCallIds,
    toolCallId: typeof raw.tool_call_id === 'string' ? raw.tool_call_id : null,
    isObject: true,
  };
}

/** Reads every item of a list as a turn. */
export function readTurns(list: readonly unknown[], basePointer: string, mapRoles: boolean): Turn[] {
  return list.map((item, i) => readTurn(item, i, joinPointer(basePointer, i), mapRoles));
}

/**
 * The record's conversation, or null when it is not a chat record: no `messages` or
 * `conversations` key, or a preference pair (those are read by `extractPair`).
 */
export function extractConversation(value: unknown, _config: CheckConfig): Conversation | null {
  if (!isPlainObject(value) || isPairRecord(value)) return null;
  const convention = has(value, 'messages') ? 'messages' : has(value, 'conversations') ? 'conversations' : null;
  if (convention === null) return null;
  const pointer = joinPointer('', convention);
  const list = value[convention];
  const turns = Array.isArray(list) ? readTurns(list, pointer, convention === 'conversations') : [];
  return { field: convention, pointer, turns, convention };
}

/** One side of a pair: text, a list of turns, or a single turn object. */
function readSide(record: Record<string, unknown>, key: string): PairSide | null {
  if (!has(record, key)) return null;
  const raw = record[key];
  const pointer = joinPointer('', key);
  if (Array.isArray(raw)) {
    const turns = readTurns(raw, pointer, false);
    return { pointer, text: turns.map((t) => t.text).join('\n'), turns };
  }
  if (isPlainObject(raw) && (has(raw, 'role') || has(raw, 'from'))) {
    const turn = readTurn(raw, 0, pointer, false);
    return { pointer, text: turn.text, turns: [turn] };
  }
  return { pointer, text: typeof raw === 'string' ? raw : '', turns: null };
}

/**
 * The record's preference pair, or null when it has neither `chosen` nor `rejected`.
 * Each side is null when its key is absent; `prompt` is often absent in the layout where
 * `chosen` and `rejected` are whole conversations that repeat the prompt turns.
 */
export function extractPair(value: unknown, _config: CheckConfig): PreferencePair | null {
  if (!isPlainObject(value) || !isPairRecord(value)) return null;
  return {
    prompt: readSide(value, 'prompt'),
    chosen: readSide(value, 'chosen'),
    rejected: readSide(value, 'rejected'),
  };
}
