// One test per chat rule. The expected conversation shape is common practice for chat fine-tuning
// (optional leading system turn, user first, alternating turns, assistant last, tool results
// answering earlier calls by id); nothing here comes from a published standard.

import { describe, expect, it } from 'vitest';
import { CHAT_RULES, chatCheck } from '../../../../src/engine/checks/chat.js';
import type { RecordIssue } from '../../../../src/engine/findings.js';
import { DEFAULT_CONFIG, withDefaults, type CheckConfig } from '../../../../src/engine/config.js';

function run(value: unknown, config: CheckConfig = DEFAULT_CONFIG): RecordIssue[] {
  const out = { issues: [] as RecordIssue[] };
  chatCheck.checkRecord({ record: 0, value }, config, out);
  return out.issues;
}
const rules = (value: unknown, config?: CheckConfig) => run(value, config).map((i) => i.rule);

const u = (content: unknown) => ({ role: 'user', content });
const a = (content: unknown) => ({ role: 'assistant', content });
const good = { messages: [{ role: 'system', content: 'You help at the bicycle co-op.' }, u('My brakes squeal.'), a('Clean the rims.')] };

describe('chat rules', () => {
  it('lists each rule once with a one-line summary', () => {
    const ids = CHAT_RULES.map((r) => r.id);
    expect(new Set(ids).size).toBe(ids.length);
    expect(ids).toContain('chat-tool-orphan');
    for (const r of CHAT_RULES) expect(r.summary).not.toMatch(/\n/);
  });

  it('a well-formed conversation has no issues', () => {
    expect(run(good)).toEqual([]);
  });

  it('plain-text records are not chat records', () => {
    expect(run({ text: 'Truing a wheel takes patience.' })).toEqual([]);
  });

  it('chat-turns-not-list: field not a list, and a misspelt field', () => {
    expect(run({ messages: { role: 'user' } })).toEqual([{ rule: 'chat-turns-not-list', message: '"messages" is an object, not a list of turns', pointer: '/messages' }]);
    expect(run({ Messages: [u('x'), a('y')] })).toMatchObject([{ rule: 'chat-turns-not-list', pointer: '/Messages' }]);
    // `conversation` (singular) is a conversation key of its own (common practice), not a misspelling.
    expect(rules({ conversation: [] })).toEqual(['chat-turns-empty']);
    expect(rules({ Conversation: [u('x'), a('y')] })).toEqual(['chat-turns-not-list']);
  });

  it('chat-turns-empty', () => {
    expect(rules({ messages: [] })).toEqual(['chat-turns-empty']);
    expect(rules({ conversations: [] })).toEqual(['chat-turns-empty']);
  });

  it('chat-turn-not-object', () => {
    const issues = run({ messages: [u('a'), 'oops', a('b')] });
    expect(issues).toMatchObject([{ rule: 'chat-turn-not-object', pointer: '/messages/1' }]);
    expect(issues[0].message).toContain('a string');
  });

  it('chat-role-missing: absent and not a string', () => {
    expect(run({ messages: [{ content: 'hi' }, a('x')] })).toMatchObject([{ rule: 'chat-role-missing', pointer: '/messages/0' }]);
    expect(run({ messages: [{ role: 7, content: 'hi' }, a('x')] })).toMatchObject([{ rule: 'chat-role-missing', pointer: '/messages/0/role' }]);
  });

  it('chat-role-unknown: outside config.chat.roles, with a case hint', () => {
    const issues = run({ messages: [u('a'), { role: 'Assistant', content: 'b' }] });
    expect(issues.map((i) => i.rule)).toContain('chat-role-unknown');
    const unknown = issues.find((i) => i.rule === 'chat-role-unknown')!;
    expect(unknown.pointer).toBe('/messages/1/role');
    expect(unknown.message).toContain('"assistant"?');
    // The same record passes when the role is allowed.
    expect(rules({ messages: [u('a'), { role: 'critic', content: 'b' }] }, withDefaults({ chat: { roles: ['user', 'critic'], allowRepeatedRoles: false } }))).not.toContain('chat-role-unknown');
  });

  it('chat-role-unknown: an unmapped speaker in the conversations layout points at "from"', () => {
    expect(run({ conversations: [{ from: 'human', value: 'a' }, { from: 'bot', value: 'b' }] })).toMatchObject([
      { rule: 'chat-role-unknown', pointer: '/conversations/1/from' },
    ]);
  });

  it('chat-content-empty: empty, white space, null, missing, empty parts', () => {
    for (const content of ['', '  \n\t', null, [], [{ type: 'text', text: ' ' }], 42]) {
      expect(run({ messages: [u('q'), a(content)] })).toMatchObject([{ rule: 'chat-content-empty', pointer: '/messages/1/content' }]);
    }
    expect(run({ messages: [u('q'), { role: 'assistant' }] })).toMatchObject([{ rule: 'chat-content-empty', pointer: '/messages/1' }]);
  });

  it('chat-content-empty: null content with tool calls and image-only parts are legal', () => {
    const withCalls = {
      messages: [
        u('Is the shop open?'),
        { role: 'assistant', content: null, tool_calls: [{ id: 'c1', type: 'function', function: { name: 'hours', arguments: '{}' } }] },
        { role: 'tool', tool_call_id: 'c1', content: '9-17' },
        a('Yes, until five.'),
      ],
    };
    expect(run(withCalls)).toEqual([]);
    expect(run({ messages: [u([{ type: 'image_url', image_url: { url: 'data:,' } }]), a('That derailleur hanger is bent.')] })).toEqual([]);
    // A user turn with null content has no such excuse.
    expect(rules({ messages: [{ role: 'user', content: null, tool_calls: [{ id: 'x' }] }, a('b')] })).toContain('chat-content-empty');
  });

  it('chat-system-misplaced', () => {
    expect(run({ messages: [u('a'), { role: 'system', content: 's' }, a('b')] })).toMatchObject([
      { rule: 'chat-system-misplaced', pointer: '/messages/1' },
    ]);
  });

  it('chat-first-not-user', () => {
    expect(run({ messages: [{ role: 'system', content: 's' }, a('hello'), u('q'), a('b')] })).toMatchObject([
      { rule: 'chat-first-not-user', pointer: '/messages/1' },
    ]);
  });

  it('chat-role-repeated, unless allowed; tool after tool is fine', () => {
    const twice = { messages: [u('a'), u('b'), a('c')] };
    expect(run(twice)).toMatchObject([{ rule: 'chat-role-repeated', pointer: '/messages/1' }]);
    expect(run(twice, withDefaults({ chat: { roles: DEFAULT_CONFIG.chat.roles, allowRepeatedRoles: true } }))).toEqual([]);
    const parallel = {
      messages: [
        u('Stock of brake pads and cables?'),
        { role: 'assistant', content: null, tool_calls: [{ id: 'p', type: 'function', function: { name: 'stock', arguments: '{"item":"pads"}' } }, { id: 'c', type: 'function', function: { name: 'stock', arguments: '{"item":"cables"}' } }] },
        { role: 'tool', tool_call_id: 'p', content: '4' },
        { role: 'tool', tool_call_id: 'c', content: '0' },
        a('Four sets of pads, no cables.'),
      ],
    };
    expect(run(parallel)).toEqual([]);
  });

  it('chat-last-not-assistant', () => {
    expect(run({ messages: [u('a'), a('b'), u('c')] })).toMatchObject([{ rule: 'chat-last-not-assistant', pointer: '/messages/2' }]);
  });

  it('chat-tool-orphan: unknown id, missing id, and no ids used at all', () => {
    const call = { role: 'assistant', content: null, tool_calls: [{ id: 'k1', type: 'function', function: { name: 'f', arguments: '{}' } }] };
    expect(run({ messages: [u('a'), call, { role: 'tool', tool_call_id: 'k2', content: 'r' }, a('b')] })).toMatchObject([
      { rule: 'chat-tool-orphan', pointer: '/messages/2/tool_call_id' },
    ]);
    expect(run({ messages: [u('a'), call, { role: 'tool', content: 'r' }, a('b')] })).toMatchObject([{ rule: 'chat-tool-orphan', pointer: '/messages/2' }]);
    // A call id answered before it was made is an orphan too.
    expect(rules({ messages: [u('a'), { role: 'tool', tool_call_id: 'k1', content: 'r' }, call, a('b')] })).toContain('chat-tool-orphan');
    // Without ids anywhere (the conversations layout), nothing is checked.
    expect(run({ conversations: [{ from: 'human', value: 'a' }, { from: 'function_call', value: '{}' }, { from: 'observation', value: 'r' }, { from: 'gpt', value: 'b' }] })).toEqual([]);
  });

  it('turn lists inside preference pairs get the per-turn rules', () => {
    const issues = run({ prompt: [u('q')], chosen: [{ role: 'assistant', content: '' }], rejected: [{ role: 'robot', content: 'x' }, u('y')] });
    expect(issues).toMatchObject([
      { rule: 'chat-content-empty', pointer: '/chosen/0/content' },
      { rule: 'chat-role-unknown', pointer: '/rejected/0/role' },
      { rule: 'chat-last-not-assistant', pointer: '/rejected/1' },
    ]);
  });

  it('quotes untrusted text in messages so it cannot break a line', () => {
    const issues = run({ messages: [u('a'), { role: 'x\nFAKE', content: 'b' }] });
    const m = issues.find((i) => i.rule === 'chat-role-unknown')!.message;
    expect(m).not.toContain('\n');
    expect(m).toContain('"x\\nFAKE"');
  });
});
