// Chat-turn rules: the shape of a conversation a trainer expects (common practice: an optional
// system turn, then a user turn, alternating turns, ending with the assistant's answer).

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { readRecord } from '../layouts/index.js';
import type { LTurn, TurnList } from '../layouts/layout.js';
import { kindOf } from '../layouts/sides.js';
import { isPlainObject } from '../layouts/turnReader.js';

type Turn = LTurn;

export const CHAT_RULES: RuleInfo[] = [
  { id: 'chat-turns-not-list', family: 'chat', severity: 'error', summary: 'The conversation field is not a list of turns, or is misspelt.' },
  { id: 'chat-turns-empty', family: 'chat', severity: 'error', summary: 'The conversation has no turns.' },
  { id: 'chat-turn-not-object', family: 'chat', severity: 'error', summary: 'A turn is not a JSON object.' },
  { id: 'chat-role-missing', family: 'chat', severity: 'error', summary: 'A turn has no role, or its role is not a string.' },
  { id: 'chat-role-unknown', family: 'chat', severity: 'error', summary: 'A turn has a role outside the allowed roles.' },
  { id: 'chat-content-empty', family: 'chat', severity: 'error', summary: 'A turn has no text (tool calls and non-text parts excepted).' },
  { id: 'chat-system-misplaced', family: 'chat', severity: 'error', summary: 'A system turn appears after the first turn.' },
  { id: 'chat-first-not-user', family: 'chat', severity: 'error', summary: 'The first turn after the system turn is not from the user.' },
  { id: 'chat-role-repeated', family: 'chat', severity: 'warning', summary: 'The same role speaks twice in a row.' },
  { id: 'chat-last-not-assistant', family: 'chat', severity: 'error', summary: 'The conversation does not end with an assistant turn.' },
  { id: 'chat-tool-orphan', family: 'chat', severity: 'error', summary: 'A tool turn answers no call made by an earlier assistant turn.' },
];

/** Keys a trainer would not find although the writer clearly meant a conversation. */
const NEAR_MISS_KEYS = new Map<string, string>([
  ['messages', 'messages'],
  ['message', 'messages'],
  ['conversations', 'conversations'],
  ['conversation', 'conversation'],
  ['dialog', 'dialog'],
]);

/** Quotes untrusted text for a message: JSON escaping keeps control characters and newlines visible. */
function q(text: string, max = 40): string {
  const cut = text.length > max ? `${text.slice(0, max)}…` : text;
  return JSON.stringify(cut);
}

/**
 * A missing conversation field is reported only when a key is a near miss of it (`Messages`,
 * `conversation`): plain-text records are legal, and a record alone cannot tell that its shard is chat.
 */
function checkMissingField(value: unknown, out: RecordIssue[]): void {
  if (!isPlainObject(value)) return;
  for (const key of Object.keys(value)) {
    const meant = NEAR_MISS_KEYS.get(key.toLowerCase());
    if (meant !== undefined && key !== meant) {
      out.push({
        rule: 'chat-turns-not-list',
        message: `no "${meant}" list; found ${q(key)} instead (field names are case-sensitive)`,
        pointer: '/' + key.replace(/~/g, '~0').replace(/\//g, '~1'),
      });
      return;
    }
  }
}

/** Rules that look at one turn alone; shared with the turn lists of preference pairs. */
export function checkTurnShapes(turns: readonly Turn[], rawTurns: readonly unknown[], config: CheckConfig, out: RecordIssue[]): void {
  for (const turn of turns) {
    if (!turn.isObject) {
      out.push({ rule: 'chat-turn-not-object', message: `turn ${turn.index} is ${kindOf(rawTurns[turn.index])}, not an object`, pointer: turn.pointer });
      continue;
    }
    const roleKeyPointer = turn.rolePointer;
    if (turn.role === null) {
      out.push({
        rule: 'chat-role-missing',
        message:
          turn.rawRole === undefined
            ? `turn ${turn.index} has no role`
            : `turn ${turn.index} has a role that is ${kindOf(turn.rawRole)}, not a string`,
        pointer: turn.rawRole === undefined ? turn.pointer : roleKeyPointer,
      });
    } else if (!config.chat.roles.includes(turn.role)) {
      const lower = turn.role.toLowerCase();
      const hint = lower !== turn.role && config.chat.roles.includes(lower) ? ` (roles are case-sensitive: ${q(lower)}?)` : '';
      out.push({
        rule: 'chat-role-unknown',
        message: `turn ${turn.index} has role ${q(turn.role)}, not one of ${config.chat.roles.join(', ')}${hint}`,
        pointer: roleKeyPointer,
      });
    }
    checkContent(turn, out);
  }
}

function checkContent(turn: Turn, out: RecordIssue[]): void {
  if (turn.text.trim() !== '') return;
  const content = { present: turn.contentPresent, value: turn.rawContent };
  // An assistant turn that only calls tools has no text by design.
  if (turn.hasToolCalls && turn.role === 'assistant') return;
  // An image or audio part, or reasoning, is content even without text; an unknown part is reported on its own.
  if (turn.parts.some((p) => p.kind !== 'text' && !(p.kind === 'reasoning' && p.text.trim() === ''))) return;
  let what: string;
  if (!content.present) what = 'has no content';
  else if (content.value === null) what = 'has null content';
  else if (typeof content.value === 'string') what = content.value === '' ? 'has empty content' : 'has only white space as content';
  else if (Array.isArray(content.value)) what = content.value.length === 0 ? 'has an empty list of parts' : 'has no text in its parts';
  else what = `has content that is ${kindOf(content.value)}, not text`;
  out.push({ rule: 'chat-content-empty', message: `turn ${turn.index} ${what}`, pointer: content.present ? turn.contentPointer : turn.pointer });
}

/** A turn whose role is missing or unknown is already reported; order rules skip it (one finding per fault). */
function isKnownRole(turn: Turn, config: CheckConfig): turn is Turn & { role: string } {
  return turn.isObject && turn.role !== null && config.chat.roles.includes(turn.role);
}

/** Rules about the order of turns in one conversation. */
export function checkTurnOrder(turns: readonly Turn[], config: CheckConfig, out: RecordIssue[]): void {
  turns.forEach((turn, i) => {
    if (turn.role === 'system' && i > 0) {
      out.push({ rule: 'chat-system-misplaced', message: `system turn at position ${i}; only the first turn may be a system turn`, pointer: turn.pointer });
    }
  });

  const firstSpeaker = turns.find((t) => t.role !== 'system');
  if (firstSpeaker !== undefined && isKnownRole(firstSpeaker, config) && firstSpeaker.role !== 'user') {
    out.push({
      rule: 'chat-first-not-user',
      message: `the first turn after the system turn is from ${q(firstSpeaker.role)}, not the user`,
      pointer: firstSpeaker.pointer,
    });
  }

  if (!config.chat.allowRepeatedRoles) {
    for (let i = 1; i < turns.length; i++) {
      const prev = turns[i - 1].role;
      const cur = turns[i].role;
      // Tool after tool is legal: parallel calls get one result turn each. A second system turn is already misplaced.
      if (cur !== null && cur === prev && cur !== 'tool' && cur !== 'system') {
        out.push({ rule: 'chat-role-repeated', message: `turns ${i - 1} and ${i} are both from ${q(cur)}`, pointer: turns[i].pointer });
      }
    }
  }

  checkLastIsAssistant(turns, config, out);
  checkToolOrphans(turns, out);
}

/** Also used for the sides of preference pairs, whose answer is the assistant's. */
export function checkLastIsAssistant(turns: readonly Turn[], config: CheckConfig, out: RecordIssue[]): void {
  const last = turns[turns.length - 1];
  if (last === undefined || !isKnownRole(last, config)) return;
  if (last.role !== 'assistant') {
    out.push({ rule: 'chat-last-not-assistant', message: `the last turn is from ${q(last.role)}; a training example ends with the assistant's answer`, pointer: last.pointer });
  }
}

function checkToolOrphans(turns: readonly Turn[], out: RecordIssue[]): void {
  // Ids are optional in some layouts: only a conversation that uses them is held to them.
  const usesIds = turns.some((t) => t.toolCallIds.length > 0 || t.toolCallId !== null);
  if (!usesIds) return;
  const called = new Set<string>();
  for (const turn of turns) {
    if (turn.role === 'assistant') for (const id of turn.toolCallIds) called.add(id);
    if (turn.role !== 'tool') continue;
    if (turn.toolCallId === null) {
      out.push({ rule: 'chat-tool-orphan', message: `tool turn ${turn.index} has no tool_call_id, though this conversation uses call ids`, pointer: turn.pointer });
    } else if (!called.has(turn.toolCallId)) {
      out.push({
        rule: 'chat-tool-orphan',
        message: `tool turn ${turn.index} answers call ${q(turn.toolCallId)}, which no earlier assistant turn made`,
        pointer: `${turn.pointer}/tool_call_id`,
      });
    }
  }
}

/** Every chat rule on one turn list: its shape, each turn, and (for a whole example) the order. */
export function checkTurnList(list: TurnList, config: CheckConfig, out: RecordIssue[]): void {
  if (list.role === 'example') {
    if (!Array.isArray(list.raw)) {
      out.push({ rule: 'chat-turns-not-list', message: `"${list.name}" is ${kindOf(list.raw)}, not a list of turns`, pointer: list.pointer });
      return;
    }
    if (list.raw.length === 0) {
      out.push({ rule: 'chat-turns-empty', message: `"${list.name}" is an empty list`, pointer: list.pointer });
      return;
    }
  }
  const rawTurns = Array.isArray(list.raw) ? list.raw : [list.raw];
  checkTurnShapes(list.turns, rawTurns, config, out);
  if (list.role === 'example') checkTurnOrder(list.turns, config, out);
  else if (list.role === 'answer') checkLastIsAssistant(list.turns, config, out);
}

export const chatCheck: Check = {
  name: 'chat',
  rules: CHAT_RULES,
  settings: [
    {
      key: 'chat.roles',
      type: 'strings',
      summary: 'roles a turn may have',
      apply: (c, v) => (c.chat.roles = [...(v as string[])]),
      cli: [{ flag: '--roles', value: 'LIST', help: 'allowed chat roles, comma-separated (default system,user,assistant,tool)' }],
    },
    {
      key: 'chat.allowRepeatedRoles',
      type: 'boolean',
      summary: 'allow the same role twice in a row',
      apply: (c, v) => (c.chat.allowRepeatedRoles = v as boolean),
      cli: [{ flag: '--allow-repeated-roles', help: 'do not report the same role twice in a row' }],
    },
    {
      key: 'chat.requireConversation',
      type: 'enum',
      values: () => ['auto', 'always', 'never'],
      summary: 'whether a record without a conversation is reported',
      apply: (c, v) => (c.chat.requireConversation = v === 'always' ? true : v === 'never' ? false : 'auto'),
      cli: [{ flag: '--require-conversation', value: 'auto|always|never', help: "report records without a conversation (default auto: when the shard's first records are chats)" }],
    },
  ],
  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const reading = readRecord(rec.value, config);
    if (reading !== null && reading.turnLists.length > 0) {
      for (const list of reading.turnLists) checkTurnList(list, config, out.issues);
      return;
    }
    // A record some layout reads without turns (a string pair, an instruction) is not a chat record.
    if (reading !== null && reading.layout !== 'text') return;
    const before = out.issues.length;
    checkMissingField(rec.value, out.issues);
    // In a chat shard, a record with no conversation at all is a broken record, not a plain one.
    if (out.issues.length === before && config.chat.requireConversation === true && isPlainObject(rec.value)) {
      out.issues.push({
        rule: 'chat-turns-not-list',
        message: 'no conversation: this shard holds conversations ("messages", "conversations", "conversation" or "dialog"), but this record has none',
        pointer: '',
      });
    }
  },
};
