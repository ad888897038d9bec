// The tokens check: record counts are sums of the reference tokenizer's counts over the record's text.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { get_encoding, type Tiktoken as ReferenceEncoder } from 'tiktoken';
import { withDefaults, type CheckConfig } from '../../../../src/engine/config.js';
import type { RecordResult } from '../../../../src/engine/checks/check.js';
import { TOKENS_RULES, tokensCheck } from '../../../../src/engine/checks/tokens.js';
import { turnTokenCounts } from '../../../../src/engine/tokens/recordTokens.js';
import { CHAT_TEMPLATE_MARKERS, findChatMarkerText } from '../../../../src/engine/tokens/counter.js';
import { projectRoot } from '../../helpers/build';

let cl100k: ReferenceEncoder;
let o200k: ReferenceEncoder;
/** Oracle: tiktoken (WASM), the reference implementation, counting without special tokens. */
const ref = (text: string, enc: ReferenceEncoder = cl100k) => enc.encode_ordinary(text).length;

function run(value: unknown, config: CheckConfig = withDefaults()): RecordResult {
  const out: RecordResult = { issues: [] };
  tokensCheck.checkRecord({ record: 0, value }, config, out);
  return out;
}

beforeAll(() => {
  cl100k = get_encoding('cl100k_base');
  o200k = get_encoding('o200k_base');
});
afterAll(() => {
  cl100k.free();
  o200k.free();
});

describe('tokensCheck', () => {
  it('asks for prepare when the encoding is not loaded', () => {
    expect(() => run({ text: 'hi' }, withDefaults({ encoding: 'o200k_base' }))).toThrow(/not loaded yet/);
  });

  it('declares its rules in the tokens family: each once, each raised by the engine, and every tokens rule the engine raises declared', async () => {
    await tokensCheck.prepare!(withDefaults());
    expect(tokensCheck.rules).toBe(TOKENS_RULES);
    const ids = TOKENS_RULES.map((r) => r.id);
    expect(new Set(ids).size).toBe(ids.length);
    expect(TOKENS_RULES.every((r) => r.family === 'tokens')).toBe(true);
    // Where the engine raises a finding it names the rule (`rule: 'id'`): those are read from its source.
    const walk = (d: string): string[] => readdirSync(d).flatMap((n) => (statSync(join(d, n)).isDirectory() ? walk(join(d, n)) : n.endsWith('.ts') ? [join(d, n)] : []));
    const raised = new Set(walk(join(projectRoot, 'src', 'engine')).flatMap((f) => [...readFileSync(f, 'utf8').matchAll(/\brule: '(tokens-[a-z0-9-]+)'/g)].map((m) => m[1])));
    expect([...raised].sort()).toEqual([...ids].sort());
  });

  it('counts a chat record as the sum of its turns', async () => {
    await tokensCheck.prepare!(withDefaults());
    const turns = [
      { role: 'system', content: 'You are the repair desk of the Spoke & Sprocket co-op.' },
      { role: 'user', content: 'My chain skips on the 11-tooth cog\u3000— why?' },
      { role: 'assistant', content: 'Check the hanger alignment first, then cable tension.\n\n1. Shift…' },
    ];
    const out = run({ messages: turns });
    expect(out.tokens).toBe(turns.reduce((n, t) => n + ref(t.content), 0));
    expect(out.issues).toEqual([]);
  });

  it('counts only the text parts of list-of-parts content', async () => {
    await tokensCheck.prepare!(withDefaults());
    const url = 'https://example.invalid/photos/derailleur-hanger-bent.jpg?size=large&token=' + 'x'.repeat(200);
    const one = run({ messages: [{ role: 'user', content: [{ type: 'text', text: 'Is this bent?' }, { type: 'image_url', image_url: { url } }] }] });
    expect(one.tokens).toBe(ref('Is this bent?'));
    // Several text parts are read as one text joined by newlines (conversation.ts convention).
    const two = run({ messages: [{ role: 'user', content: [{ type: 'text', text: 'Front view.' }, { type: 'image_url', image_url: { url } }, { type: 'text', text: 'Side view.' }] }] });
    expect(two.tokens).toBe(ref('Front view.\nSide view.'));
  });

  it('counts a preference pair as prompt + chosen + rejected', async () => {
    await tokensCheck.prepare!(withDefaults());
    const prompt = 'How tight should the stem bolts be?';
    const chosen = 'Follow the torque printed on the stem, usually 5 N·m.';
    const rejected = 'As tight as you can get them!!!';
    expect(run({ prompt, chosen, rejected }).tokens).toBe(ref(prompt) + ref(chosen) + ref(rejected));
    const asTurns = run({
      chosen: [{ role: 'user', content: prompt }, { role: 'assistant', content: chosen }],
      rejected: [{ role: 'user', content: prompt }, { role: 'assistant', content: rejected }],
    });
    expect(asTurns.tokens).toBe(2 * ref(prompt) + ref(chosen) + ref(rejected));
  });

  it('counts the first configured text field, else every top-level string', async () => {
    await tokensCheck.prepare!(withDefaults());
    expect(run({ id: 7, body: 'second', text: 'first field wins' }).tokens).toBe(ref('first field wins'));
    expect(run({ text: 'custom order', passage: 'chosen' }, withDefaults({ textFields: ['passage', 'text'] })).tokens).toBe(ref('chosen'));
    expect(run({ prompt: 'Fix a flat?', completion: ' Patch or swap the tube.' }).tokens).toBe(ref('Fix a flat?') + ref(' Patch or swap the tube.'));
  });

  it('reports a record without text once, as info, and counts 0', async () => {
    await tokensCheck.prepare!(withDefaults());
    const out = run({ id: 3, price: 12.5 });
    expect(out.tokens).toBe(0);
    expect(out.issues.map((i) => i.rule)).toEqual(['tokens-no-text']);
    // A value that is not an object is a record-not-object finding already: no second finding.
    for (const value of [42, null, [1, 2]]) {
      const o = run(value);
      expect(o.tokens).toBe(0);
      expect(o.issues).toEqual([]);
    }
    // An empty chat is a chat (the chat check reports it), not a record without text.
    expect(run({ messages: [] }).issues).toEqual([]);
  });

  it('warns when the count is over the context length, naming both numbers', async () => {
    await tokensCheck.prepare!(withDefaults());
    const text = 'true the wheel '.repeat(20);
    const count = ref(text);
    const over = run({ text }, withDefaults({ contextLength: count - 1 }));
    expect(over.issues).toHaveLength(1);
    expect(over.issues[0]!.rule).toBe('tokens-over-context');
    expect(over.issues[0]!.pointer).toBe('');
    expect(over.issues[0]!.message).toContain(String(count));
    expect(over.issues[0]!.message).toContain(String(count - 1));
    expect(run({ text }, withDefaults({ contextLength: count })).issues).toEqual([]);
  });

  it('warns where text spells a special token, pointing at the turn content', async () => {
    await tokensCheck.prepare!(withDefaults());
    const value = {
      messages: [
        { role: 'user', content: 'hello' },
        { role: 'assistant', content: 'Done.<|endoftext|> and again <|endoftext|><|fim_prefix|>' },
      ],
    };
    const out = run(value);
    // Special-token spellings count as ordinary text (reference encode_ordinary).
    expect(out.tokens).toBe(ref('hello') + ref(value.messages[1]!.content));
    expect(out.issues).toHaveLength(1);
    expect(out.issues[0]).toMatchObject({ rule: 'tokens-special-text', pointer: '/messages/1/content' });
    expect(out.issues[0]!.message).toContain('"<|endoftext|>"');
    expect(out.issues[0]!.message).toContain('"<|fim_prefix|>"');
    expect(out.issues[0]!.message).toContain('3 times');
  });

  it('uses the configured encoding for counts and special tokens', async () => {
    const config = withDefaults({ encoding: 'o200k_base' });
    await tokensCheck.prepare!(config);
    const text = 'Fill <|fim_prefix|> here; tyres 700×28c 🚲';
    const out = run({ text }, config);
    expect(out.tokens).toBe(ref(text, o200k));
    // o200k_base has no fill-in-the-middle tokens (tiktoken_ext/openai_public.py).
    expect(out.issues).toEqual([]);
  });
});

describe('tokensCheck: chat-template markers in text', () => {
  const markerIssue = (value: unknown, config?: CheckConfig) => run(value, config).issues.filter((i) => i.rule === 'tokens-special-text');
  // The markers spelled here, not taken from the product's list (from memory: the ChatML markers of
  // chat templates in the im_start style, and the header and end-of-turn markers of the Llama 3
  // family's template).
  const MARKERS = ['<|im_start|>', '<|im_end|>', '<|im_sep|>', '<|begin_of_text|>', '<|start_header_id|>', '<|end_header_id|>', '<|eot_id|>'];

  it('knows the markers of both template families', () => {
    expect([...CHAT_TEMPLATE_MARKERS].sort()).toEqual([...MARKERS].sort());
  });

  it('the markers are no special tokens of the encodings (oracle: tiktoken encodes them alike with and without specials allowed)', () => {
    for (const enc of [cl100k, o200k]) {
      for (const m of MARKERS) expect(Array.from(enc.encode(m, 'all'))).toEqual(Array.from(enc.encode_ordinary(m)));
    }
  });

  it('warns on every marker of the list, spelled whole, and on none spelled short of its last character', async () => {
    for (const encoding of ['cl100k_base', 'o200k_base'] as const) {
      const config = withDefaults({ encoding });
      await tokensCheck.prepare!(config);
      for (const m of MARKERS) {
        const whole = markerIssue({ text: `Reply${m}then more` }, config);
        expect(whole, `${encoding} ${m}`).toHaveLength(1);
        expect(whole[0]!.message).toContain(`chat-template marker "${m}";`);
        expect(whole[0]!.pointer).toBe('/text');
        expect(markerIssue({ text: `Reply${m.slice(0, -1)} then more` }, config), `${encoding} ${m} cut`).toEqual([]);
        // Case matters: the templates' markers are spelled in lower case.
        expect(markerIssue({ text: `Reply${m.toUpperCase()}` }, config), `${encoding} ${m} upper`).toEqual([]);
      }
    }
  });

  it('points at the turn that spells it and counts the marker as ordinary text', async () => {
    await tokensCheck.prepare!(withDefaults());
    const value = {
      messages: [
        { role: 'user', content: 'My brake lever feels spongy.' },
        { role: 'assistant', content: 'Bleed the caliper.<|im_end|>\n<|im_start|>user\nThanks!<|im_end|>' },
      ],
    };
    const out = run(value);
    expect(out.tokens).toBe(ref(value.messages[0]!.content) + ref(value.messages[1]!.content));
    expect(out.issues).toHaveLength(1);
    expect(out.issues[0]!.rule).toBe('tokens-special-text');
    expect(out.issues[0]!.pointer).toBe('/messages/1/content');
    // Several markers: named once each, in the plural.
    expect(out.issues[0]!.message).toContain('chat-template markers "<|im_end|>", "<|im_start|>";');
    expect(out.issues[0]!.message.match(/<\|im_end\|>/g)).toHaveLength(1);
  });

  it('says nothing of a text without a marker, or with angle brackets and bars that make none', async () => {
    await tokensCheck.prepare!(withDefaults());
    expect(markerIssue({ text: 'Gear ratio <|> 2:1 | see <im_start> and |im_end|' })).toEqual([]);
    expect(markerIssue({ messages: [{ role: 'user', content: 'Plain question about tyre pressure.' }] })).toEqual([]);
  });

  it("reports a text's encoding special tokens instead of its markers, in one finding per text", async () => {
    await tokensCheck.prepare!(withDefaults());
    const issues = markerIssue({ text: 'End<|endoftext|> then <|im_start|>' });
    expect(issues).toHaveLength(1);
    expect(issues[0]!.message).toContain('cl100k_base special token "<|endoftext|>"');
  });

  it('findChatMarkerText finds markers left to right, with their offsets', () => {
    const text = 'a<|im_start|>b<|eot_id|><|im_sep|>';
    expect(findChatMarkerText(text)).toEqual([
      { token: '<|im_start|>', index: 1 },
      { token: '<|eot_id|>', index: 14 },
      { token: '<|im_sep|>', index: 24 },
    ]);
    for (const h of findChatMarkerText(text)) expect(text.slice(h.index, h.index + h.token.length)).toBe(h.token);
    expect(findChatMarkerText('<|im_start|')).toEqual([]);
  });
});

describe('turnTokenCounts', () => {
  it('gives each turn its pointer, role and count', async () => {
    await tokensCheck.prepare!(withDefaults());
    const value = { conversations: [{ from: 'human', value: 'Brake squeal?' }, { from: 'gpt', value: 'Clean the rotor with alcohol.' }] };
    expect(turnTokenCounts(value, withDefaults())).toEqual([
      { pointer: '/conversations/0', role: 'user', tokens: ref('Brake squeal?') },
      { pointer: '/conversations/1', role: 'assistant', tokens: ref('Clean the rotor with alcohol.') },
    ]);
    expect(turnTokenCounts({ text: 'plain' }, withDefaults())).toEqual([{ pointer: '/text', role: null, tokens: ref('plain') }]);
    expect(turnTokenCounts({ id: 1 }, withDefaults())).toEqual([]);
  });
});
