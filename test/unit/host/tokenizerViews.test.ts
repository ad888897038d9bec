// The host's tokenizer glue: which setting names a shard's tokenizer, and the detail pane's rendered
// sequences cut to size with their trained spans kept inside the cut. Hand-worked cases.
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type * as vscode from 'vscode';
import type { RenderedRecord } from '../../../src/engine/tokens/recordTokens';
import { renderedViews } from '../../../src/host/detailView';
import { tokenizerSetting } from '../../../src/host/tokenizerSetting';

function settings(values: Record<string, unknown>): vscode.WorkspaceConfiguration {
  return { get: (key: string, fallback?: unknown) => (key in values ? values[key] : fallback) } as unknown as vscode.WorkspaceConfiguration;
}

describe('tokenizerSetting', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shardwise-tok-setting-'));
    mkdirSync(join(dir, 'models', 'bike-7b'), { recursive: true });
    writeFileSync(join(dir, 'models', 'bike-7b', 'tokenizer.json'), '{}');
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('takes the first matching glob, else tokens.tokenizer, else leaves the encoding setting to decide', () => {
    const byGlob = { 'sft/**': './models/bike-7b', '*.jsonl': 'o200k_base' };
    const matchesSft = (g: string) => g === 'sft/**';
    expect(tokenizerSetting(settings({ 'tokens.tokenizerByGlob': byGlob }), dir, 'a.jsonl', matchesSft)).toEqual({ tokenizer: join(dir, 'models', 'bike-7b') });
    expect(tokenizerSetting(settings({ 'tokens.tokenizerByGlob': byGlob, 'tokens.tokenizer': 'models/bike-7b' }), dir, 'a.jsonl', () => false)).toEqual({ tokenizer: join(dir, 'models', 'bike-7b') });
    expect(tokenizerSetting(settings({}), dir, 'a.jsonl', () => true)).toEqual({});
  });

  it('says why a folder cannot be used, and names the setting', () => {
    const r = tokenizerSetting(settings({ 'tokens.tokenizer': './models/missing' }), dir, 'a.jsonl', () => false);
    expect(r.tokenizer).toBeUndefined();
    expect(r.problem).toMatch(/shardwise\.tokens\.tokenizer cannot be used.*does not exist/);
  });
});

describe('renderedViews', () => {
  const record: RenderedRecord = {
    sequences: [{ name: 'messages', content: 3, error: null, text: '<u>hi</u><a>ok</a>', spans: [{ start: 12, end: 18, message: 1 }], rendered: 9, trainable: 3 }],
    rendered: 9,
    trainable: 3,
    length: 9,
    longest: 'messages',
  };

  it('keeps the text and spans when the text fits', () => {
    expect(renderedViews(record, 100)).toEqual([{ name: 'messages', text: '<u>hi</u><a>ok</a>', cut: false, spans: [{ start: 12, end: 18 }], rendered: 9, content: 3, trainable: 3, error: null }]);
  });

  it('clips spans to a cut text and drops those past it', () => {
    expect(renderedViews(record, 14)[0]).toMatchObject({ text: '<u>hi</u><a>ok', cut: true, spans: [{ start: 12, end: 14 }] });
    expect(renderedViews(record, 10)[0]).toMatchObject({ cut: true, spans: [] });
  });
});
