// The model-folder tokenizer kind against the reference Rust implementation of tokenizer.json
// (npm `tokenizers`, its native binary: an independent oracle, not our code path), for three model
// families' files; and what a missing or malformed folder says.
import { mkdirSync, mkdtempSync, rmSync, writeFileSync, copyFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadTokenizer, resolveTokenizerValue, TokenizerError, type Tokenizer } from '../../../../src/engine/tokens/index.js';
import { loadModelTokenizer } from '../../../../src/engine/tokens/model.js';
import { LONG_WORD } from '../../../../src/engine/tokens/longWords.js';
import { withDefaults } from '../../../../src/engine/config.js';
import type { RecordResult } from '../../../../src/engine/checks/check.js';
import { tokensCheck } from '../../../../src/engine/checks/tokens.js';
import { escapeText, prng, randomText, SPACE_LIKE } from './corpus.js';
import { FAMILIES, modelFolder, referenceTokenizer, type ReferenceTokenizer } from './models.js';

const STRINGS = 1500;

/** Content the trade's shards hold: CJK, emoji, code, JSON, Unicode white space (seeded, reproducible). */
function corpus(seed: number): string[] {
  const rand = prng(seed);
  const extra = [
    '自行车链条需要多久上一次油？チェーンの注油は月に一度。자전거 체인 청소 방법',
    '👩‍🔧🚲🔧 fixed it ✅ 🇳🇱 1️⃣ ❤️‍🔥',
    'def true_wheel(spokes: list[int]) -> float:\n\treturn sum(spokes) / len(spokes)  # tension\n',
    '{"role": "assistant", "content": "Tighten to 5\u00a0N·m", "tool_calls": [{"id": "c1", "arguments": "{\\"bolt\\": 4}"}]}',
    SPACE_LIKE.join('x') + SPACE_LIKE.join(''),
    '   \n\n\n\t\t  leading and trailing   \u3000\u3000',
  ];
  const out = [...extra];
  for (let i = 0; i < STRINGS; i++) out.push(randomText(rand));
  return out;
}

function differs(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return true;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return true;
  return false;
}

describe.each(FAMILIES)('%s tokenizer.json against the reference Rust implementation', (family) => {
  let ours: Tokenizer;
  let reference: ReferenceTokenizer;
  beforeAll(async () => {
    ours = await loadTokenizer(modelFolder(family));
    reference = referenceTokenizer(family);
  }, 60_000);

  it(`gives the reference's ids on ${STRINGS} generated strings (Unicode white space, emoji, CJK, code, JSON)`, async () => {
    // Lone surrogates cannot cross into the Rust binding (its strings are UTF-8), so they are replaced as a JSON reader would.
    const texts = corpus(0x9e11 + family.length).map((t) => t.replace(/[\uD800-\uDFFF]/g, (c, i, s) => (c.charCodeAt(0) < 0xdc00 && /[\uDC00-\uDFFF]/.test(s[i + 1] ?? '')) || (c.charCodeAt(0) >= 0xdc00 && /[\uD800-\uDBFF]/.test(s[i - 1] ?? '')) ? c : '\uFFFD'));
    // Oracle: tokenizers (Rust) encode without added special tokens, as a template's rendering is encoded.
    const expected = await reference.encodeBatch(texts, { addSpecialTokens: false });
    let first: string | null = null;
    texts.forEach((text, i) => {
      if (first !== null) return;
      const want = expected[i]!.getIds();
      const ids = ours.encode(text);
      const n = ours.count(text);
      const r = ours.countRendered(text);
      if (differs(ids, want) || n !== want.length || r !== want.length) {
        first = `string #${i}: ${escapeText(text)}\n  reference ${want}\n  ours      ${ids} (count ${n}, rendered count ${r})`;
      }
    });
    expect(first).toBeNull();
  }, 120_000);

  it('gives the reference\'s ids on words too long for the library\'s own merge routine (runs of every white-space-like character, repeated punctuation, CJK)', async () => {
    // Oracle: tokenizers (Rust). Each text holds one word of LONG_WORD characters or more.
    const rand = prng(0x10c9 + family.length);
    const texts: string[] = [];
    for (const ch of [...SPACE_LIKE.filter((c) => !/[\uD800-\uDFFF]/.test(c)), 'x', '-', '=', '自', '🚲', 'é']) {
      texts.push(ch.repeat(LONG_WORD + Math.floor(rand() * 4000)));
    }
    for (let i = 0; i < 20; i++) {
      const unit = ['ab', 'Qu', '--=', ' \t', 'ñ', '12'][i % 6]!;
      texts.push(`start ${unit.repeat(Math.ceil((LONG_WORD + rand() * 6000) / unit.length))} end`);
    }
    const expected = await reference.encodeBatch(texts, { addSpecialTokens: false });
    texts.forEach((text, i) => {
      const want = expected[i]!.getIds();
      expect(differs(ours.encode(text), want), `text #${i}: ${escapeText(text.slice(0, 12))}… (${text.length} characters)`).toBe(false);
      expect(ours.count(text)).toBe(want.length);
    });
  }, 120_000);

  it('reads its own special-token spellings as control tokens, as the reference does', async () => {
    const specials = Object.keys(ours.specialTokens).slice(0, 40);
    const text = specials.map((s, i) => `turn ${i}: ${s}\nhello${s}${s} world`).join(' ');
    const want = (await reference.encode(text, null, { addSpecialTokens: false })).getIds();
    expect(ours.encode(text)).toEqual(want);
    expect(ours.countRendered(text)).toBe(want.length);
    expect(ours.count(text)).toBe(want.length);
  });
});

describe('special-token spellings in the text of a model\'s records', () => {
  it('are findings for control tokens only, not for added vocabulary such as runs of newlines', async () => {
    // Which added tokens are control tokens is what each tokenizer.json marks `special` (Gemma 3's
    // file also adds runs of newlines and spaces as ordinary vocabulary).
    for (const [family, control, vocabulary] of [
      ['qwen3', '<|im_end|>', '<think>'],
      ['gemma3', '<start_of_turn>', '\n\n\n'],
    ] as const) {
      const config = withDefaults({ tokenizer: modelFolder(family) });
      await tokensCheck.prepare!(config);
      const run = (text: string) => {
        const out: RecordResult = { issues: [] };
        tokensCheck.checkRecord({ record: 0, value: { text } }, config, out);
        return out.issues.filter((i) => i.rule === 'tokens-special-text');
      };
      const hit = run(`Reply, then write ${control} twice: ${control}`);
      expect(hit.map((i) => i.pointer), family).toEqual(['/text']);
      expect(hit[0]!.message).toContain(`"${control}"`);
      expect(hit[0]!.message).toContain('2 times');
      expect(run(`Plain ${vocabulary} text`), family).toEqual([]);
    }
  }, 60_000);
});

describe('a model folder that is missing or malformed', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shardwise-model-'));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('names a missing folder', async () => {
    const missing = join(dir, 'no-such-model');
    await expect(loadModelTokenizer(missing)).rejects.toThrow(TokenizerError);
    await expect(loadModelTokenizer(missing)).rejects.toThrow(/model folder ".*no-such-model" does not exist/);
  });

  it('says a folder holds no tokenizer.json', async () => {
    const empty = join(dir, 'empty');
    mkdirSync(empty);
    await expect(loadModelTokenizer(empty)).rejects.toThrow(/holds no tokenizer\.json/);
  });

  it('says tokenizer.json is not JSON, or not a tokenizer', async () => {
    const bad = join(dir, 'bad');
    mkdirSync(bad);
    writeFileSync(join(bad, 'tokenizer.json'), '{"model": {"type": "BPE", ');
    await expect(loadModelTokenizer(bad)).rejects.toThrow(/tokenizer\.json is not valid JSON/);
    writeFileSync(join(bad, 'tokenizer.json'), '{"version": "1.0"}');
    await expect(loadModelTokenizer(bad)).rejects.toThrow(/has no "model" section/);
    writeFileSync(join(bad, 'tokenizer.json'), '[1, 2]');
    await expect(loadModelTokenizer(bad)).rejects.toThrow(/is not a JSON object/);
  });

  it('says a malformed tokenizer_config.json is not JSON', async () => {
    const cfg = join(dir, 'cfg');
    mkdirSync(cfg);
    copyFileSync(join(modelFolder('qwen3'), 'tokenizer.json'), join(cfg, 'tokenizer.json'));
    writeFileSync(join(cfg, 'tokenizer_config.json'), '{"chat_template": ');
    await expect(loadModelTokenizer(cfg)).rejects.toThrow(/tokenizer_config\.json is not valid JSON/);
    // Without a config the tokenizer still loads, with no chat template.
    rmSync(join(cfg, 'tokenizer_config.json'));
    const t = await loadModelTokenizer(cfg);
    expect(t.chatTemplate).toBeNull();
    expect(t.count('hello world')).toBe(2);
  }, 30_000);

  it('prefers chat_template.jinja beside the config', async () => {
    const j = join(dir, 'jinja');
    mkdirSync(j);
    copyFileSync(join(modelFolder('qwen3'), 'tokenizer.json'), join(j, 'tokenizer.json'));
    copyFileSync(join(modelFolder('qwen3'), 'tokenizer_config.json'), join(j, 'tokenizer_config.json'));
    writeFileSync(join(j, 'chat_template.jinja'), '{% for m in messages %}[{{ m.role }}]{{ m.content }}{% endfor %}');
    const t = await loadModelTokenizer(j);
    expect(t.chatTemplate?.origin).toBe('chat_template.jinja');
    expect(t.chatTemplate?.specials.eos_token).toBe('<|im_end|>');
  }, 30_000);
});

describe('resolveTokenizerValue', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shardwise-resolve-'));
    mkdirSync(join(dir, 'models', 'bike-7b'), { recursive: true });
    writeFileSync(join(dir, 'models', 'bike-7b', 'tokenizer.json'), '{}');
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('keeps encoding names and resolves folders against the base folder', () => {
    expect(resolveTokenizerValue('o200k_base', dir)).toBe('o200k_base');
    expect(resolveTokenizerValue('models/bike-7b', dir)).toBe(join(dir, 'models', 'bike-7b'));
    expect(resolveTokenizerValue(join(dir, 'models', 'bike-7b'), '/elsewhere')).toBe(join(dir, 'models', 'bike-7b'));
  });

  it('throws a TokenizerError that says what is wrong', () => {
    expect(() => resolveTokenizerValue('p50k_base', dir)).toThrow(TokenizerError);
    expect(() => resolveTokenizerValue('p50k_base', dir)).toThrow(/Unknown tokenizer "p50k_base".*does not exist.*cl100k_base and o200k_base/);
    expect(() => resolveTokenizerValue('models', dir)).toThrow(/holds no tokenizer\.json/);
    expect(() => resolveTokenizerValue('  ', dir)).toThrow(/empty/);
  });
});
