// Reading conversations and preference pairs. Layouts are common practice (chat-completion style
// `messages` with role/content and tool calls; `conversations` with from/value; prompt/chosen/rejected pairs).

import { describe, expect, it } from 'vitest';
import { DEFAULT_CONFIG } from '../../../../src/engine/config.js';
import { extractConversation, extractPair } from '../../../../src/engine/checks/conversation.js';

const cfg = DEFAULT_CONFIG;

describe('extractConversation', () => {
  it('reads messages with role and content, with RFC 6901 pointers', () => {
    const conv = extractConversation({ messages: [{ role: 'user', content: 'My chain skips' }, { role: 'assistant', content: 'Check the cassette.' }] }, cfg);
    expect(conv?.convention).toBe('messages');
    expect(conv?.pointer).toBe('/messages');
    expect(conv?.turns.map((t) => [t.role, t.text, t.pointer, t.contentPointer])).toEqual([
      ['user', 'My chain skips', '/messages/0', '/messages/0/content'],
      ['assistant', 'Check the cassette.', '/messages/1', '/messages/1/content'],
    ]);
  });

  it('maps the conversations speaker names onto roles (common practice)', () => {
    const conv = extractConversation(
      {
        conversations: [
          { from: 'system', value: 's' },
          { from: 'human', value: 'h' },
          { from: 'gpt', value: 'g' },
          { from: 'function_call', value: 'f' },
          { from: 'observation', value: 'o' },
          { from: 'tool', value: 't' },
          { role: 'human', content: 'r' },
        ],
      },
      cfg,
    );
    expect(conv?.convention).toBe('conversations');
    expect(conv?.turns.map((t) => t.role)).toEqual(['system', 'user', 'assistant', 'tool', 'tool', 'tool', 'user']);
    expect(conv?.turns[1].rawRole).toBe('human');
    expect(conv?.turns[1].contentPointer).toBe('/conversations/1/value');
    expect(conv?.turns[6].contentPointer).toBe('/conversations/6/content');
  });

  it('keeps only text parts of a list of parts as text', () => {
    const conv = extractConversation(
      { messages: [{ role: 'user', content: [{ type: 'text', text: 'Is this rim bent?' }, { type: 'image_url', image_url: { url: 'x' } }, { type: 'text', text: 'Front wheel.' }] }] },
      cfg,
    );
    expect(conv?.turns[0].text).toBe('Is this rim bent?\nFront wheel.');
  });

  it('reads tool calls and the ids tool turns answer', () => {
    const conv = extractConversation(
      {
        messages: [
          { role: 'user', content: 'Price of a tube?' },
          { role: 'assistant', content: null, tool_calls: [{ id: 'call_1', type: 'function', function: { name: 'price', arguments: '{}' } }] },
          { role: 'tool', tool_call_id: 'call_1', content: '6 EUR' },
        ],
      },
      cfg,
    );
    const [, a, t] = conv!.turns;
    expect(a.hasToolCalls).toBe(true);
    expect(a.toolCallIds).toEqual(['call_1']);
    expect(a.text).toBe('');
    expect(t.toolCallId).toBe('call_1');
  });

  it('returns null for plain-text records and for preference pairs', () => {
    expect(extractConversation({ text: 'a plain document' }, cfg)).toBeNull();
    expect(extractConversation('just a string', cfg)).toBeNull();
    expect(extractConversation({ messages: [], chosen: 'a', rejected: 'b' }, cfg)).toBeNull();
  });

  it('returns the field with no turns when it is not a list', () => {
    const conv = extractConversation({ messages: 'hello' }, cfg);
    expect(conv).toEqual({ field: 'messages', pointer: '/messages', turns: [], convention: 'messages' });
  });

  it('marks items that are not objects', () => {
    const conv = extractConversation({ messages: ['hi', { role: 'assistant', content: 'x' }] }, cfg);
    expect(conv?.turns[0].isObject).toBe(false);
    expect(conv?.turns[0].role).toBeNull();
    expect(conv?.turns[1].isObject).toBe(true);
  });
});

describe('extractPair', () => {
  it('reads string sides', () => {
    const pair = extractPair({ prompt: 'Q', chosen: 'good', rejected: 'bad' }, cfg);
    expect(pair?.prompt).toEqual({ pointer: '/prompt', text: 'Q', turns: null });
    expect(pair?.chosen?.text).toBe('good');
    expect(pair?.rejected?.pointer).toBe('/rejected');
  });

  it('reads sides that are whole conversations repeating the prompt turns', () => {
    const pair = extractPair(
      {
        chosen: [{ role: 'user', content: 'Q' }, { role: 'assistant', content: 'good' }],
        rejected: [{ role: 'user', content: 'Q' }, { role: 'assistant', content: 'bad' }],
      },
      cfg,
    );
    expect(pair?.prompt).toBeNull();
    expect(pair?.chosen?.turns?.map((t) => t.pointer)).toEqual(['/chosen/0', '/chosen/1']);
    expect(pair?.rejected?.text).toBe('Q\nbad');
  });

  it('returns null for a record without chosen or rejected', () => {
    expect(extractPair({ prompt: 'Q' }, cfg)).toBeNull();
    expect(extractPair({ messages: [] }, cfg)).toBeNull();
  });
});
