// The tokenizer kinds' registry: every value reaches exactly the kind that claims it, and each kind's
// descriptor agrees with the tokenizers it loads (a kind added with a wrong name, a loader that
// returns another kind, or a chat-template promise it cannot keep fails here).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ENCODINGS } from '../../../../src/engine/config.js';
import { resolveTokenizerValue, tokenizerKindOf, tokenizerLabel, TOKENIZER_KINDS, TokenizerError, loadTokenizer } from '../../../../src/engine/tokens/index.js';
import { FAMILIES, modelFolder } from './models.js';

const tmp = mkdtempSync(join(tmpdir(), 'sw-kinds-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** One value per kind that a user would write, and one tokenizer it must load. */
const SAMPLES: Record<string, string[]> = {
  encoding: [...ENCODINGS],
  model: FAMILIES.map((f) => modelFolder(f)),
};

describe('tokenizer kinds', () => {
  it('kind names are unique and every kind has sample values in this test', () => {
    const names = TOKENIZER_KINDS.map((k) => k.kind);
    expect(new Set(names).size).toBe(names.length);
    // A new kind must bring its own samples here, so the checks below cover it.
    expect(Object.keys(SAMPLES).sort()).toEqual([...names].sort());
  });

  it('each sample is claimed by its own kind first, and loads a tokenizer of that kind', async () => {
    for (const [kind, values] of Object.entries(SAMPLES)) {
      for (const value of values) {
        const k = tokenizerKindOf(value);
        expect(k.kind, value).toBe(kind);
        expect(k.problem(value), value).toBeNull();
        const t = await loadTokenizer(value);
        expect(t.kind, value).toBe(kind);
        expect(t.label).toBe(tokenizerLabel(value));
        // A kind that says it carries no chat template never loads one.
        if (!k.chatTemplates) expect(t.chatTemplate, value).toBeNull();
      }
    }
    // The model folders of these families all ship a chat template (tokenizer_config.json).
    const withTemplate = await Promise.all(SAMPLES.model.map((v) => loadTokenizer(v)));
    expect(withTemplate.every((t) => t.chatTemplate !== null)).toBe(true);
  });

  it('resolving: encoding names stay names, folders become absolute, a missing folder is a clear error', () => {
    expect(resolveTokenizerValue(' o200k_base ', tmp)).toBe('o200k_base');
    const folder = modelFolder('qwen3');
    expect(resolveTokenizerValue('models', join(folder, '..'))).toBe(folder);
    expect(() => resolveTokenizerValue('models/x', tmp)).toThrow(TokenizerError);
    expect(() => resolveTokenizerValue('p50k_base', tmp)).toThrow(/Unknown tokenizer "p50k_base".*does not exist.*cl100k_base and o200k_base/);
    // The empty value names what every kind accepts.
    expect(() => resolveTokenizerValue('', tmp)).toThrow(new RegExp(TOKENIZER_KINDS.map((k) => k.written.replace(/[()]/g, '\\$&')).join('.*')));
  });

  it('labels: an encoding by its name, a hub cache snapshot by its model, a folder by its own name', () => {
    expect(tokenizerLabel('cl100k_base')).toBe('cl100k_base');
    expect(tokenizerLabel('/home/a/.cache/huggingface/hub/models--Qwen--Qwen3-8B/snapshots/0123abcd')).toBe('Qwen/Qwen3-8B');
    expect(tokenizerLabel('/data/models/bike-7b/')).toBe('bike-7b');
  });
});
