// Generated records of every layout (seeded, text rich in Unicode white space, emoji, CJK, code
// and JSON from the shared test corpus): the shard's content, prompt and response tokens equal the
// reference tokenizer's (tiktoken, WASM) counts of the strings each layout's description names as
// content, summed in this test without our reader.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { get_encoding, type Tiktoken } from 'tiktoken';
import { withDefaults } from '../../../../src/engine/config.js';
import type { RecordResult } from '../../../../src/engine/checks/check.js';
import { tokensCheck } from '../../../../src/engine/checks/tokens.js';
import { decideLayout } from '../../../../src/engine/layouts/index.js';
import { prng, randomText } from '../tokens/corpus.js';

let ref: Tiktoken;
const n = (s: string) => ref.encode_ordinary(s).length;
beforeAll(async () => {
  ref = get_encoding('cl100k_base');
  await tokensCheck.prepare!(withDefaults());
});
afterAll(() => ref.free());

interface Made { record: unknown; prompt: string[]; response: string[] }
type Maker = (t: () => string) => Made;

/** Each maker writes a record from the layout's description and lists its content strings by side. */
const MAKERS: Record<string, Maker> = {
  turns: (t) => {
    const [s, u, a, call, tool, a2] = [t(), t(), t(), t(), t(), t()];
    return {
      record: {
        id: t(),
        messages: [
          { role: 'system', content: s },
          { role: 'user', content: [{ type: 'text', text: u }] },
          { role: 'assistant', content: a, tool_calls: [{ id: 'c1', type: 'function', function: { name: 'lookup', arguments: JSON.stringify({ q: call }) } }] },
          { role: 'tool', tool_call_id: 'c1', content: tool },
          { role: 'assistant', content: a2 },
        ],
        tools: [{ type: 'function', function: { name: 'lookup', description: t() } }],
      },
      prompt: [s, u, tool],
      response: [a, 'lookup', JSON.stringify({ q: call }), a2],
    };
  },
  speakers: (t) => {
    const [s, h, g] = [t(), t(), t()];
    return { record: { conversations: [{ from: 'system', value: s }, { from: 'human', value: h }, { from: 'gpt', value: g }], source: t() }, prompt: [s, h], response: [g] };
  },
  instruction: (t) => {
    const [i, x, o] = [t(), t(), t()];
    return { record: { instruction: i, input: x, output: o }, prompt: [i, x], response: [o] };
  },
  'prompt-completion': (t) => {
    const [p, c] = [t(), t()];
    return { record: { prompt: [{ role: 'user', content: p }], completion: [{ role: 'assistant', content: c }] }, prompt: [p], response: [c] };
  },
  preference: (t) => {
    const [p, c, r] = [t(), t(), t()];
    return { record: { prompt: p, chosen: c, rejected: r, id: t() }, prompt: [p], response: [c, r] };
  },
  feedback: (t) => {
    const [p, c] = [t(), t()];
    return { record: { prompt: p, completion: c, label: true }, prompt: [p], response: [c] };
  },
  text: (t) => {
    const x = t();
    return { record: { text: x, url: t(), meta: t() }, prompt: [], response: [x] };
  },
  eval: (t) => {
    const [q, a] = [t(), t()];
    return { record: { question: q, answer: a, subject: t() }, prompt: [q], response: [a] };
  },
};

describe.each(Object.keys(MAKERS))('generated %s records', (name) => {
  it('content, prompt and response tokens equal the reference counts of the described strings', () => {
    const rand = prng(name.length * 7919 + 17);
    const made = Array.from({ length: 60 }, () => MAKERS[name](() => randomText(rand) || 'x'));
    const decided = decideLayout(made.map((m) => m.record), withDefaults());
    expect(decided?.share).toBe(1);
    const config = withDefaults({ shardLayout: decided!.id });
    let prompt = 0;
    let response = 0;
    let wantPrompt = 0;
    let wantResponse = 0;
    for (const m of made) {
      const out: RecordResult = { issues: [] };
      tokensCheck.checkRecord({ record: 0, value: m.record }, config, out);
      prompt += out.prompt!;
      response += out.response!;
      expect(out.tokens).toBe(out.prompt! + out.response!);
      wantPrompt += m.prompt.reduce((s, x) => s + n(x), 0);
      wantResponse += m.response.reduce((s, x) => s + n(x), 0);
    }
    expect(prompt).toBe(wantPrompt);
    expect(response).toBe(wantResponse);
  });
});
