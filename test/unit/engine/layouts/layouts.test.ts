// Layouts: every common training-data layout read as the trade writes it. The records are written
// from the layouts' public descriptions (each marked: "common practice" where no single published
// spec exists); content-token totals are checked against the reference tokenizer (tiktoken, WASM
// build of the Rust core) counting, in this test, the strings the layout description says are content.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { get_encoding, type Tiktoken } from 'tiktoken';
import { withDefaults, type CheckConfig } from '../../../../src/engine/config.js';
import type { RecordResult } from '../../../../src/engine/checks/check.js';
import { ALL_CHECKS } from '../../../../src/engine/checks/index.js';
import { tokensCheck } from '../../../../src/engine/checks/tokens.js';
import { decideLayout, readRecord } from '../../../../src/engine/layouts/index.js';

let ref: Tiktoken;
/** Oracle: the reference tokenizer's count of one string (no special tokens). */
const n = (s: string) => ref.encode_ordinary(s).length;
const sum = (...xs: string[]) => xs.reduce((t, x) => t + n(x), 0);

beforeAll(async () => {
  ref = get_encoding('cl100k_base');
  await tokensCheck.prepare!(withDefaults());
});
afterAll(() => ref.free());

function check(value: unknown, config: CheckConfig = withDefaults()): RecordResult & { rules: string[] } {
  const out: RecordResult = { issues: [] };
  for (const c of ALL_CHECKS) if (c.name !== 'schema') c.checkRecord({ record: 0, value }, config, out);
  return { ...out, rules: out.issues.map((i) => i.rule).sort() };
}

describe('turn lists (common practice: chat-completion messages; speaker lists with from/value)', () => {
  it('reads content parts keyed `value` as text, so they count and are not empty', () => {
    const rec = { messages: [{ role: 'user', content: [{ type: 'text', value: 'My brake squeals' }] }, { role: 'assistant', content: [{ type: 'text', value: 'Clean the rotor with alcohol.' }] }] };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('My brake squeals', 'Clean the rotor with alcohol.'));
    expect(r.response).toBe(n('Clean the rotor with alcohol.'));
    expect(r.prompt).toBe(n('My brake squeals'));
  });

  it('maps from/value speakers; function_call is the assistant calling, observation the tool answering', () => {
    const call = '{"name": "stock", "arguments": {"part": "chain"}}';
    const rec = {
      conversations: [
        { from: 'system', value: 'You help at the co-op.' },
        { from: 'human', value: 'Is a 12-speed chain in stock?' },
        { from: 'function_call', value: call },
        { from: 'observation', value: '{"count": 3}' },
        { from: 'gpt', value: 'Yes, three.' },
      ],
      system: 'Be brief.',
      tools: '[{"name": "stock"}]',
    };
    const reading = readRecord(rec, withDefaults())!;
    expect(reading.layout).toBe('turns');
    expect(reading.turnLists[0].turns.map((t) => t.role)).toEqual(['system', 'user', 'assistant', 'tool', 'assistant']);
    const r = check(rec);
    // Two assistant turns in a row? No: call, tool answer, then the answer. Tool definitions are not content.
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Be brief.', 'You help at the co-op.', 'Is a 12-speed chain in stock?', call, '{"count": 3}', 'Yes, three.'));
    expect(r.response).toBe(sum(call, 'Yes, three.'));
  });

  it('counts tool-call names and arguments (string or object), answers by tool_call_id, and flags bad JSON arguments', () => {
    const args = '{"date": "2026-12-03"}';
    const rec = {
      messages: [
        { role: 'user', content: 'Book me a repair slot tomorrow' },
        { role: 'assistant', content: null, tool_calls: [{ id: 'c1', type: 'function', function: { name: 'book_slot', arguments: args } }] },
        { role: 'tool', tool_call_id: 'c1', content: 'booked 10:00' },
        { role: 'assistant', content: 'Booked for ten.', tool_calls: [{ id: 'c2', type: 'function', function: { name: 'notify', arguments: { sms: true } } }] },
        { role: 'tool', tool_call_id: 'c2', content: 'sent' },
        { role: 'assistant', content: 'Done.' },
      ],
    };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Book me a repair slot tomorrow', 'book_slot', args, 'booked 10:00', 'Booked for ten.', 'notify', JSON.stringify({ sms: true }), 'sent', 'Done.'));
    const bad = structuredClone(rec);
    (bad.messages[1].tool_calls![0].function as { arguments: string }).arguments = '{"date": ';
    expect(check(bad).rules).toEqual(['tool-arguments-invalid']);
  });

  it('reasoning parts and fields are content; media parts excuse empty text; unknown part types warn', () => {
    const rec = {
      messages: [
        { role: 'user', content: [{ type: 'image_url', image_url: { url: 'https://example.invalid/wheel.jpg' } }, { type: 'text', text: 'Is this rim cracked?' }] },
        { role: 'assistant', reasoning_content: 'Look at the spoke holes.', content: [{ type: 'thinking', thinking: 'A hairline crack.' }, { type: 'text', text: 'Yes, replace it.' }] },
      ],
    };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Is this rim cracked?', 'Look at the spoke holes.', 'A hairline crack.', 'Yes, replace it.'));
    const odd = { messages: [{ role: 'user', content: [{ type: 'hologram', data: 'x' }, { type: 'text', text: 'q' }] }, { role: 'assistant', content: 'a' }] };
    expect(check(odd).rules).toEqual(['part-type-unknown']);
  });

  it('counts <image> placeholders against the images list; a missing relative path warns', () => {
    const ok = { messages: [{ role: 'user', content: '<image>What gear is this?' }, { role: 'assistant', content: 'An 11-speed cassette.' }], images: ['https://example.invalid/a.png'] };
    expect(check(ok).rules).toEqual([]);
    const two = { ...ok, images: ['https://example.invalid/a.png', 'https://example.invalid/b.png'] };
    expect(check(two).rules).toEqual(['media-count-mismatch']);
    const none = { messages: ok.messages };
    expect(check(none).rules).toEqual(['media-count-mismatch']);
    const missing = { ...ok, images: ['media/not-there.png'] };
    expect(check(missing, withDefaults({ baseDir: '/nonexistent-shard-folder' })).rules).toEqual(['media-path-missing']);
  });

  it('maps user field names: turns under `dialog`, role under `speaker`, content under `utterance`', () => {
    const rec = { dialogue_turns: [{ speaker: 'user', utterance: 'Hi' }, { speaker: 'assistant', utterance: 'Hello!' }] };
    const cfg = withDefaults({ layout: { id: 'auto', fields: { turns: ['dialogue_turns'], role: ['speaker'], content: ['utterance'] } } });
    const r = check(rec, cfg);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Hi', 'Hello!'));
  });
});

describe('instruction records (common practice: instruction / input / output)', () => {
  it('counts instruction, input, output, system and history; output is the response', () => {
    const rec = { instruction: 'Explain tubeless tyres.', input: 'For a commuter.', output: 'They seal small punctures.', system: 'Co-op helper', history: [['Hi', 'Hello']] };
    const r = check(rec);
    expect(readRecord(rec, withDefaults())!.layout).toBe('instruction');
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Explain tubeless tyres.', 'For a commuter.', 'They seal small punctures.', 'Co-op helper', 'Hi', 'Hello'));
    expect(r.response).toBe(sum('They seal small punctures.', 'Hello'));
  });
  it('an instruction without output, or with an empty one, is a finding', () => {
    expect(check({ instruction: 'x', input: '' }).rules).toEqual(['instruction-output-missing']);
    expect(check({ instruction: 'x', output: '  ' }).rules).toEqual(['instruction-output-missing']);
  });
});

describe('prompt and completion (common practice: strings, or lists of turns)', () => {
  it('strings: the two together are one sequence', () => {
    const r = check({ prompt: 'How tight is a crank bolt?', completion: 'About 40 newton metres.' });
    expect(r.tokens).toBe(sum('How tight is a crank bolt?', 'About 40 newton metres.'));
    expect(r.length).toBe(r.tokens);
    expect(r.response).toBe(n('About 40 newton metres.'));
  });
  it('conversational: chat rules run, and a completion that ends on a user turn is a finding', () => {
    const prompt = [{ role: 'user', content: 'Squeaky chain?' }];
    expect(check({ prompt, completion: [{ role: 'assistant', content: 'Oil it.' }] }).rules).toEqual([]);
    expect(check({ prompt, completion: [{ role: 'assistant', content: 'Oil it.' }, { role: 'user', content: 'ok' }] }).rules).toEqual(['chat-last-not-assistant']);
    expect(check({ prompt: [{ role: 'user' }], completion: 'Oil it.' }).rules).toEqual(['chat-content-empty']);
  });
});

describe('preference pairs (common practice, every form)', () => {
  it('strings: each sequence is prompt + one side; the record length is the longer, content is all three', () => {
    const rec = { prompt: 'Best tyre pressure?', chosen: 'It depends on your weight and tyre width; start at 4 bar.', rejected: '100 psi.' };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum(rec.prompt, rec.chosen, rec.rejected));
    expect(r.length).toBe(sum(rec.prompt, rec.chosen));
    // Over context judged per sequence: a context that holds prompt + chosen holds the pair.
    expect(check(rec, withDefaults({ contextLength: sum(rec.prompt, rec.chosen) })).rules).toEqual([]);
    expect(check(rec, withDefaults({ contextLength: sum(rec.prompt, rec.chosen) - 1 })).rules).toEqual(['tokens-over-context']);
  });

  it('a prompt in a turn list with string or single-turn answers is a pair, not a broken chat', () => {
    const messages = [{ role: 'user', content: 'Fix a flat?' }];
    for (const rec of [
      { messages, chosen: 'Patch the tube.', rejected: 'Buy a new bike.' },
      { conversations: [{ from: 'human', value: 'Fix a flat?' }], chosen: { from: 'gpt', value: 'Patch the tube.' }, rejected: { from: 'gpt', value: 'Buy a new bike.' } },
      { chosen_messages: [...messages, { role: 'assistant', content: 'Patch the tube.' }], rejected_messages: [...messages, { role: 'assistant', content: 'Buy a new bike.' }] },
    ]) {
      expect(readRecord(rec, withDefaults())!.layout).toBe('preference');
      const r = check(rec);
      expect(r.rules).toEqual([]);
      expect(r.tokens).toBeGreaterThan(0);
    }
    expect(check({ messages, chosen: 'Same.', rejected: 'Same.' }).rules).toEqual(['pair-identical']);
  });

  it('transcripts with \\n\\nHuman: / \\n\\nAssistant: are parsed into turns for the pair rules', () => {
    const chosen = '\n\nHuman: How do I true a wheel?\n\nAssistant: Use a spoke key, a quarter turn at a time.';
    const rejected = '\n\nHuman: How do I true a wheel?\n\nAssistant: Hit it.';
    const reading = readRecord({ chosen, rejected }, withDefaults())!;
    expect(reading.pair!.chosen.turns!.map((t) => [t.role, t.text])).toEqual([
      ['user', 'How do I true a wheel?'],
      ['assistant', 'Use a spoke key, a quarter turn at a time.'],
    ]);
    const r = check({ chosen, rejected });
    expect(r.rules).toEqual([]);
    // Each transcript is one string: counted whole, on its own.
    expect(r.tokens).toBe(sum(chosen, rejected));
    expect(r.length).toBe(n(chosen));
    expect(check({ chosen, rejected: '\n\nHuman: Other question\n\nAssistant: Hit it.' }).rules).toEqual(['pair-prompt-mismatch']);
    expect(check({ chosen, rejected: chosen }).rules).toEqual(['pair-identical']);
  });
});

describe('unpaired feedback, plain text, evaluation items (common practice)', () => {
  it('a boolean label is fine; anything else is a finding', () => {
    expect(check({ prompt: 'Q', completion: 'A', label: true }).rules).toEqual([]);
    expect(check({ prompt: 'Q', completion: 'A', label: 'yes' }).rules).toEqual(['feedback-label-invalid']);
    expect(check({ messages: [{ role: 'user', content: 'Q' }, { role: 'assistant', content: 'A' }], label: 1 }).rules).toEqual(['feedback-label-invalid']);
  });
  it('plain text counts the text field only; evaluation items count question and answer', () => {
    expect(check({ id: 'doc-1', source: 'manual', text: 'Spokes tension evenly.' }).tokens).toBe(n('Spokes tension evenly.'));
    const q = { question: 'How many spokes on a 32h rim?', answer: '32', category: 'wheels' };
    expect(readRecord(q, withDefaults())!.layout).toBe('eval');
    expect(check(q).tokens).toBe(sum(q.question, q.answer));
    expect(check({ turns: ['First question', 'Follow-up'] }).tokens).toBe(sum('First question', 'Follow-up'));
  });
});

describe("the shard's layout", () => {
  it('is the layout most of the first records fit; a record of another layout is a finding', () => {
    const pairs = Array.from({ length: 9 }, (_, i) => ({ prompt: `q${i}`, chosen: `good ${i}`, rejected: `bad ${i}` }));
    const decided = decideLayout([...pairs, { messages: [] }], withDefaults());
    expect(decided).toEqual({ id: 'preference', share: 0.9 });
    const cfg = withDefaults({ shardLayout: 'preference' });
    const chat = { messages: [{ role: 'user', content: 'q' }, { role: 'assistant', content: 'a' }] };
    expect(check(chat, cfg).rules).toEqual(['layout-mismatch']);
    expect(check(pairs[0], cfg).rules).toEqual([]);
  });
});

describe('preference pairs as real writers lay them out (common practice)', () => {
  it('a prompt string beside whole-conversation sides: each side is fed alone, the prompt string is not added twice', () => {
    const chosen = [{ role: 'user', content: 'Why does my chain skip?' }, { role: 'assistant', content: 'A worn cassette or a stretched chain.' }];
    const rejected = [{ role: 'user', content: 'Why does my chain skip?' }, { role: 'assistant', content: 'Bikes do that.' }];
    const rec = { prompt: 'Why does my chain skip?', prompt_id: 'abc123', chosen, rejected, score_chosen: 8, score_rejected: 2 };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.tokens).toBe(sum('Why does my chain skip?', 'Why does my chain skip?', 'A worn cassette or a stretched chain.', 'Why does my chain skip?', 'Bikes do that.'));
    expect(r.length).toBe(sum('Why does my chain skip?', 'A worn cassette or a stretched chain.'));
  });
  it('system + question + chosen + rejected strings: the question is the prompt', () => {
    const rec = { system: 'You are the co-op helper.', question: 'Can I reuse a chain pin?', chosen: 'No, use a new connecting pin.', rejected: 'Sure.' };
    const r = check(rec);
    expect(r.rules).toEqual([]);
    expect(r.length).toBe(sum(rec.system, rec.question, rec.chosen));
    expect(r.prompt).toBe(sum(rec.system, rec.question));
  });
});
