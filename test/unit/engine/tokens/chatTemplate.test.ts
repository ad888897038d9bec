// Chat templates of three model families rendered by us (@huggingface/jinja) against Python's
// jinja2 (the engine the templates are written for) set up as the model-hub library sets it up
// (from memory: a sandboxed environment with trim_blocks and lstrip_blocks, loop controls, the
// `generation` block, a `tojson` that keeps non-ASCII and key order, `raise_exception` and
// `strftime_now`); rendered token
// totals against the reference Rust tokenizer (npm `tokenizers`); trained spans worked by hand.
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withDefaults, type CheckConfig } from '../../../../src/engine/config.js';
import type { RecordResult } from '../../../../src/engine/checks/check.js';
import { tokensCheck } from '../../../../src/engine/checks/tokens.js';
import { chatTemplateOf, renderedRecord } from '../../../../src/engine/tokens/recordTokens.js';
import { analyzeEntry } from '../../../../src/engine/analyze.js';
import { ALL_CHECKS } from '../../../../src/engine/checks/index.js';
import { readRecord } from '../../../../src/engine/layouts/index.js';
import { conversationOf, type ChatMessage } from '../../../../src/engine/tokens/chatTemplate.js';
import { loadTokenizer, type Tokenizer } from '../../../../src/engine/tokens/index.js';
import { FAMILIES, modelFolder, referenceTokenizer, type Family, type ReferenceTokenizer } from './models.js';

const PYTHON_ORACLE = String.raw`
import json, sys
from datetime import datetime
import jinja2
from jinja2.sandbox import ImmutableSandboxedEnvironment
from jinja2.ext import Extension, loopcontrols
from jinja2 import nodes

class Generation(Extension):
    # The {% generation %} block of assistant turns: renders its body unchanged.
    tags = {"generation"}
    def parse(self, parser):
        lineno = next(parser.stream).lineno
        body = parser.parse_statements(["name:endgeneration"], drop_needle=True)
        return nodes.CallBlock(self.call_method("_body"), [], [], body).set_lineno(lineno)
    def _body(self, caller):
        return caller()

def raise_exception(message):
    raise jinja2.exceptions.TemplateError(message)

def tojson(x, ensure_ascii=False, indent=None, separators=None, sort_keys=False):
    return json.dumps(x, ensure_ascii=ensure_ascii, indent=indent, separators=separators, sort_keys=sort_keys)

env = ImmutableSandboxedEnvironment(trim_blocks=True, lstrip_blocks=True, extensions=[loopcontrols, Generation])
env.filters["tojson"] = tojson
env.globals["raise_exception"] = raise_exception
env.globals["strftime_now"] = lambda fmt: datetime.now().strftime(fmt)
req = json.load(sys.stdin)
template = env.from_string(req["template"])
out = []
for ctx in req["contexts"]:
    try:
        out.append({"text": template.render(**ctx)})
    except Exception as e:
        out.append({"error": type(e).__name__ + ": " + str(e)})
sys.stdout.write(json.dumps(out))
`;

/** Renders each context with Python's jinja2. */
function pythonRender(template: string, contexts: Record<string, unknown>[]): ({ text: string } | { error: string })[] {
  const r = spawnSync('python3', ['-c', PYTHON_ORACLE], { input: JSON.stringify({ template, contexts }), encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`python3 jinja2 oracle failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

const TOOLS = [
  {
    type: 'function',
    function: {
      name: 'lookup_part',
      description: 'Find a spare part in the co-op’s stock — by name (ünïcode welcome)',
      parameters: { type: 'object', properties: { name: { type: 'string' }, size: { type: 'integer' } }, required: ['name'] },
    },
  },
];

/** Records of the bicycle-repair desk in the layouts the trade writes; each becomes one conversation. */
const RECORDS: Record<string, unknown> = {
  'system + user + assistant': {
    messages: [
      { role: 'system', content: 'You are the repair desk of the Spoke & Sprocket co-op.' },
      { role: 'user', content: 'My chain skips on the 11-tooth cog\u3000— why? 🚲' },
      { role: 'assistant', content: 'Check the hanger alignment first.\n\n1. Shift to the smallest cog.\n2. Look from behind.' },
    ],
  },
  'multi-turn': {
    conversations: [
      { from: 'human', value: '  自行车链条多久上一次油？ ' },
      { from: 'gpt', value: 'Every 300 km, or after rain.' },
      { from: 'human', value: 'And the cassette?\n\n```\ndegrease --all\n```' },
      { from: 'gpt', value: 'Degrease it every second chain change.\t' },
    ],
  },
  'tool calls': {
    messages: [
      { role: 'system', content: 'Use the stock tool.' },
      { role: 'user', content: 'Do you have a 10 mm cone spanner?' },
      { role: 'assistant', content: '', tool_calls: [{ id: 'call_1', type: 'function', function: { name: 'lookup_part', arguments: { name: 'cone spanner', size: 10 } } }] },
      { role: 'tool', tool_call_id: 'call_1', content: '{"in_stock": 3, "shelf": "B4"}' },
      { role: 'assistant', content: 'Yes — three, on shelf B4.' },
    ],
    tools: TOOLS,
  },
  'tool call with arguments as a string': {
    messages: [
      { role: 'user', content: 'Price of a KMC X11 chain?' },
      { role: 'assistant', content: '', tool_calls: [{ id: 'c7', type: 'function', function: { name: 'lookup_part', arguments: '{"name": "KMC X11"}' } }] },
      { role: 'tool', tool_call_id: 'c7', content: '29.90 EUR' },
      { role: 'assistant', content: 'It is 29.90 EUR.' },
    ],
    tools: TOOLS,
  },
  'reasoning': {
    messages: [
      { role: 'user', content: 'Is 5 N·m enough for a stem bolt?' },
      { role: 'assistant', reasoning_content: 'Stem bolts are usually 4–6 N·m.', content: 'Yes, 5 N·m is within the usual range.' },
    ],
  },
  'instruction record': { instruction: 'Explain a quick-release skewer.', input: 'For a beginner.', output: 'It clamps the wheel with a cam lever.' },
};

describe.each(FAMILIES)('%s chat template against Python jinja2', (family: Family) => {
  let tokenizer: Tokenizer;
  let reference: ReferenceTokenizer;
  let config: CheckConfig;
  const cases: { name: string; messages: ChatMessage[]; tools?: unknown[]; record: unknown }[] = [];
  beforeAll(async () => {
    tokenizer = await loadTokenizer(modelFolder(family));
    reference = referenceTokenizer(family);
    config = withDefaults({ tokenizer: modelFolder(family) });
    for (const [name, record] of Object.entries(RECORDS)) {
      const reading = readRecord(record, config)!;
      const conv = conversationOf(reading, reading.sequences[0]!, record)!;
      cases.push({ name, messages: conv.messages, tools: conv.tools, record });
    }
  }, 60_000);

  it('renders every conversation as jinja2 does (or both refuse it)', () => {
    const template = chatTemplateOf(tokenizer)!;
    const spec = tokenizer.chatTemplate!;
    const contexts = cases.map((c) => ({ ...spec.specials, messages: c.messages, add_generation_prompt: false, ...(c.tools ? { tools: c.tools } : {}) }));
    const expected = pythonRender(spec.source, contexts);
    let rendered = 0;
    cases.forEach((c, i) => {
      const want = expected[i]!;
      let ours: { text: string } | { error: string };
      try {
        ours = { text: template.render(c.messages, c.tools) };
      } catch (err) {
        ours = { error: (err as Error).message };
      }
      if ('text' in want) {
        expect(ours, c.name).toEqual(want);
        rendered++;
      } else {
        expect('error' in ours, `${c.name}: jinja2 raised ${want.error}, we rendered`).toBe(true);
      }
    });
    // Every family renders the plain conversations; Gemma's template refuses tool turns.
    expect(rendered).toBeGreaterThanOrEqual(family === 'gemma3' ? 3 : cases.length);
  });

  it('counts each rendered sequence as the reference tokenizer does, through the tokens check', async () => {
    const spec = tokenizer.chatTemplate!;
    const contexts = cases.map((c) => ({ ...spec.specials, messages: c.messages, add_generation_prompt: false, ...(c.tools ? { tools: c.tools } : {}) }));
    const expected = pythonRender(spec.source, contexts);
    await tokensCheck.prepare!(config);
    for (const [i, c] of cases.entries()) {
      const want = expected[i]!;
      const out: RecordResult = { issues: [] };
      tokensCheck.checkRecord({ record: 0, value: c.record }, config, out);
      if (!('text' in want)) {
        expect(out.issues.map((x) => x.rule), c.name).toContain('tokens-template-error');
        continue;
      }
      // Oracle: tokenizers (Rust) on jinja2's rendering, special spellings as control tokens, nothing added.
      const n = (await reference.encode(want.text, null, { addSpecialTokens: false })).getIds().length;
      expect(out.rendered, c.name).toBe(n);
      expect(out.length, c.name).toBe(n);
      // A template may drop text the content counts (Gemma's drops reasoning); elsewhere it only adds.
      if (c.name !== 'reasoning') expect(out.rendered! - out.tokens!, `${c.name}: template overhead`).toBeGreaterThan(0);
    }
  });
});

/** Tokens of a string by the reference. */
async function refCount(reference: ReferenceTokenizer, text: string): Promise<number> {
  return (await reference.encode(text, null, { addSpecialTokens: false })).getIds().length;
}

describe('trained tokens on hand-worked conversations', () => {
  const record = {
    messages: [
      { role: 'user', content: 'Brake squeal?' },
      { role: 'assistant', content: 'Clean the rotor.' },
      { role: 'user', content: 'Still squeals.' },
      { role: 'assistant', content: 'Replace the pads.' },
    ],
  };
  // The assistant spans, worked out by hand from each template: from after the assistant header
  // through the turn's end marker (and the newline the template writes after it).
  const HAND: Record<Family, string[]> = {
    qwen3: ['Clean the rotor.<|im_end|>\n', '<think>\n\n</think>\n\nReplace the pads.<|im_end|>\n'],
    llama3: ['Clean the rotor.<|eot_id|>', 'Replace the pads.<|eot_id|>'],
    gemma3: ['Clean the rotor.<end_of_turn>\n', 'Replace the pads.<end_of_turn>\n'],
  };

  it.each(FAMILIES)('%s: the trained spans are the assistant turns, and their tokens the reference counts', async (family) => {
    const config = withDefaults({ tokenizer: modelFolder(family) });
    await tokensCheck.prepare!(config);
    const reference = referenceTokenizer(family);
    const r = renderedRecord(record, config)!;
    const seq = r.sequences[0]!;
    expect(seq.spans.map((s) => seq.text.slice(s.start, s.end))).toEqual(HAND[family]);
    let want = 0;
    for (const s of HAND[family]) want += await refCount(reference, s);
    expect(seq.trainable).toBe(want);
    expect(r.trainable).toBe(want);
  }, 60_000);

  it('leaves out a turn whose flag excludes it from the loss, and a prompt turn of a pair', async () => {
    const family = 'qwen3';
    const config = withDefaults({ tokenizer: modelFolder(family) });
    await tokensCheck.prepare!(config);
    const reference = referenceTokenizer(family);
    const flagged = { messages: record.messages.map((m, i) => (i === 1 ? { ...m, weight: 0 } : m)) };
    const r = renderedRecord(flagged, config)!;
    const seq = r.sequences[0]!;
    expect(seq.spans.map((s) => seq.text.slice(s.start, s.end))).toEqual([HAND.qwen3[1]]);
    expect(seq.trainable).toBe(await refCount(reference, HAND.qwen3[1]!));

    // A pair: each side rendered on its own; the prompt's turns condition the answer and are not trained.
    const pair = { prompt: [{ role: 'user', content: 'Tubeless or tubes?' }], chosen: [{ role: 'assistant', content: 'Tubeless, for fewer flats.' }], rejected: [{ role: 'assistant', content: 'Whatever.' }] };
    const p = renderedRecord(pair, config)!;
    expect(p.sequences.map((s) => s.name)).toEqual(['prompt + chosen', 'prompt + rejected']);
    const spans = p.sequences.map((s) => s.spans.map((x) => s.text.slice(x.start, x.end)));
    expect(spans).toEqual([['<think>\n\n</think>\n\nTubeless, for fewer flats.<|im_end|>\n'], ['<think>\n\n</think>\n\nWhatever.<|im_end|>\n']]);
    expect(p.length).toBe(Math.max(...p.sequences.map((s) => s.rendered)));
    expect(p.rendered).toBe(p.sequences[0]!.rendered + p.sequences[1]!.rendered);
  }, 60_000);

  it("aligns a turn the template renders differently once later turns follow (Qwen 3 drops a past turn's reasoning)", async () => {
    const config = withDefaults({ tokenizer: modelFolder('qwen3') });
    await tokensCheck.prepare!(config);
    const reference = referenceTokenizer('qwen3');
    const value = {
      messages: [
        { role: 'user', content: 'Chain wear?' },
        { role: 'assistant', reasoning_content: 'Measure with a checker.', content: 'Replace it past 0.5 %.' },
        { role: 'user', content: 'And the cassette?' },
        { role: 'assistant', content: 'Check it with a new chain.' },
      ],
    };
    const seq = renderedRecord(value, config)!.sequences[0]!;
    // By hand from the template: the first answer is rendered without its reasoning (it comes
    // before the last user turn); the last one gets the empty thinking block.
    const hand = ['Replace it past 0.5 %.<|im_end|>\n', '<think>\n\n</think>\n\nCheck it with a new chain.<|im_end|>\n'];
    expect(seq.text).not.toContain('Measure with a checker.');
    expect(seq.spans.map((s) => seq.text.slice(s.start, s.end))).toEqual(hand);
    expect(seq.trainable).toBe((await refCount(reference, hand[0]!)) + (await refCount(reference, hand[1]!)));
  }, 60_000);

  it('finds a conversation with no trained token', async () => {
    const config = withDefaults({ tokenizer: modelFolder('llama3') });
    await tokensCheck.prepare!(config);
    const out: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value: { messages: [{ role: 'user', content: 'Hello?' }, { role: 'assistant', content: 'Hi.', train: false }] } }, config, out);
    expect(out.trainable).toBe(0);
    expect(out.issues.map((i) => i.rule)).toEqual(['tokens-no-trainable']);
  }, 60_000);
});

describe("a template's generation tags", () => {
  // A ChatML-style template of our own whose generation block covers the answer and its end marker
  // but not the newline after it (the prefixes would take that newline too): the spans show which
  // way they were found.
  const TEMPLATE = [
    '{% for m in messages %}',
    "{{ '<|im_start|>' + m.role + '\\n' }}",
    "{%- if m.role == 'assistant' %}",
    "  {% generation %}{{ m.content + '<|im_end|>' }}{% endgeneration %}",
    "{{ '\\n' }}",
    '{% else %}',
    "{{ m.content + '<|im_end|>\\n' }}",
    '{% endif %}',
    '{% endfor %}',
  ].join('\n');
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shardwise-generation-'));
    copyFileSync(join(modelFolder('qwen3'), 'tokenizer.json'), join(dir, 'tokenizer.json'));
    copyFileSync(join(modelFolder('qwen3'), 'tokenizer_config.json'), join(dir, 'tokenizer_config.json'));
    writeFileSync(join(dir, 'chat_template.jinja'), TEMPLATE);
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('mark the trained spans, the rendering equal to jinja2 with its generation block', async () => {
    const config = withDefaults({ tokenizer: dir });
    await tokensCheck.prepare!(config);
    const messages = [
      { role: 'user', content: 'Brake squeal?' },
      { role: 'assistant', content: 'Clean the rotor.' },
      { role: 'user', content: 'Still squeals.' },
      { role: 'assistant', content: 'Replace the pads.', train: false },
      { role: 'user', content: 'And now?' },
      { role: 'assistant', content: 'Bed them in.' },
    ];
    const r = renderedRecord({ messages }, config)!;
    const seq = r.sequences[0]!;
    const want = pythonRender(TEMPLATE, [{ messages: messages.map(({ role, content }) => ({ role, content })), add_generation_prompt: false }])[0]!;
    expect({ text: seq.text }).toEqual(want);
    // By hand: each answer with its end marker, the flagged one left out.
    expect(seq.spans.map((s) => seq.text.slice(s.start, s.end))).toEqual(['Clean the rotor.<|im_end|>', 'Bed them in.<|im_end|>']);
    const reference = referenceTokenizer('qwen3');
    expect(seq.trainable).toBe((await refCount(reference, 'Clean the rotor.<|im_end|>')) + (await refCount(reference, 'Bed them in.<|im_end|>')));
  }, 60_000);
});

describe('template findings at their record', () => {
  it("is a tokens-template-error where the template raises (Gemma's refuses a tool turn), placed at the turns", async () => {
    const config = withDefaults({ tokenizer: modelFolder('gemma3') });
    const value = RECORDS['tool calls'];
    const text = JSON.stringify(value);
    await tokensCheck.prepare!(config);
    const o = analyzeEntry({ entry: 4, record: 4, line: 5, column: 1, text, value, findings: [] }, ALL_CHECKS, config);
    const f = o.findings.find((x) => x.rule === 'tokens-template-error');
    expect(f).toBeDefined();
    expect(f!.message).toMatch(/Conversation roles must alternate/);
    expect([f!.record, f!.line, f!.column, f!.pointer]).toEqual([4, 5, text.indexOf('"messages"') + 1 + '"messages":'.length, '/messages']);
    // Its tokens are the content's; the other records still render.
    expect(o.rendered).toBe(o.tokens);
  }, 60_000);

  it("names the turn whose null content a template cannot read (Qwen 3's, as jinja2 also refuses)", async () => {
    const config = withDefaults({ tokenizer: modelFolder('qwen3') });
    await tokensCheck.prepare!(config);
    const value = {
      messages: [
        { role: 'user', content: 'Do you stock 28 mm tubes?' },
        { role: 'assistant', content: null, tool_calls: [{ id: 'c1', type: 'function', function: { name: 'lookup_part', arguments: '{"name": "tube 28"}' } }] },
        { role: 'tool', tool_call_id: 'c1', content: '12 in stock' },
        { role: 'assistant', content: 'Yes, twelve.' },
      ],
    };
    const reading = readRecord(value, config)!;
    const conv = conversationOf(reading, reading.sequences[0]!, value)!;
    const spec = (await loadTokenizer(modelFolder('qwen3'))).chatTemplate!;
    const [py] = pythonRender(spec.source, [{ ...spec.specials, messages: conv.messages, add_generation_prompt: false }]);
    expect(py).toHaveProperty('error');
    const out: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value }, config, out);
    const f = out.issues.find((i) => i.rule === 'tokens-template-error')!;
    expect(f.pointer).toBe('/messages/1/content');
    expect(f.message).toMatch(/turn 2 has null content/);
    // The oracle agrees that this turn is the cause: with text there, jinja2 renders the conversation.
    const [fixed] = pythonRender(spec.source, [{ ...spec.specials, messages: conv.messages.map((m, i) => (i === 1 ? { ...m, content: '' } : m)), add_generation_prompt: false }]);
    expect(fixed).toHaveProperty('text');
    // Agent records call tools more than once: with two such turns, the first is named.
    const call = (id: string) => ({ role: 'assistant', content: null, tool_calls: [{ id, type: 'function', function: { name: 'lookup_part', arguments: '{"name": "tube 28"}' } }] });
    const twice = { messages: [value.messages[0], call('c1'), { role: 'tool', tool_call_id: 'c1', content: '12 in stock' }, call('c2'), { role: 'tool', tool_call_id: 'c2', content: '3 in the back' }, { role: 'assistant', content: 'Yes, fifteen.' }] };
    const out2: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value: twice }, config, out2);
    const f2 = out2.issues.find((i) => i.rule === 'tokens-template-error')!;
    expect([f2.pointer, /turn 2 has null content/.test(f2.message)]).toEqual(['/messages/1/content', true]);
  }, 60_000);

  it('names no turn when the template fails for another reason (Gemma 3 refuses the tool turn, text or not)', async () => {
    const config = withDefaults({ tokenizer: modelFolder('gemma3') });
    await tokensCheck.prepare!(config);
    const value = {
      messages: [
        { role: 'user', content: 'Do you stock 28 mm tubes?' },
        { role: 'assistant', content: null, tool_calls: [{ id: 'c1', type: 'function', function: { name: 'lookup_part', arguments: '{"name": "tube 28"}' } }] },
        { role: 'tool', tool_call_id: 'c1', content: '12 in stock' },
        { role: 'assistant', content: 'Yes, twelve.' },
      ],
    };
    const out: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value }, config, out);
    const f = out.issues.find((i) => i.rule === 'tokens-template-error')!;
    expect(f.message).not.toMatch(/has null content/);
    // jinja2 as the oracle: the template fails with the turn's text empty too.
    const reading = readRecord(value, config)!;
    const conv = conversationOf(reading, reading.sequences[0]!, value)!;
    const spec = (await loadTokenizer(modelFolder('gemma3'))).chatTemplate!;
    const [py] = pythonRender(spec.source, [{ ...spec.specials, messages: conv.messages.map((m, i) => (i === 1 ? { ...m, content: '' } : m)), add_generation_prompt: false }]);
    expect(py).toHaveProperty('error');
  }, 60_000);

  it('is tokens-rendered-over-context when the rendered form is over the context length, though the content is not', async () => {
    const folder = modelFolder('qwen3');
    const base = withDefaults({ tokenizer: folder });
    await tokensCheck.prepare!(base);
    const value = RECORDS['system + user + assistant'];
    const probe: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value }, base, probe);
    const config = withDefaults({ tokenizer: folder, contextLength: probe.tokens! + 1 });
    const out: RecordResult = { issues: [] };
    tokensCheck.checkRecord({ record: 0, value }, config, out);
    expect(out.issues.map((i) => i.rule)).toEqual(['tokens-rendered-over-context']);
    expect(out.issues[0]!.message).toContain(`${out.rendered} tokens`);
  }, 60_000);
});
