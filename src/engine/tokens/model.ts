// The second tokenizer kind: a model folder on disk holding `tokenizer.json` (the format of the
// reference Rust `tokenizers` library), with `tokenizer_config.json` and an optional chat template
// (`chat_template.jinja`, `chat_template.json`, or `chat_template` in the config). Read with
// `@huggingface/tokenizers`; nothing is ever fetched from a network.

import { existsSync, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { Tokenizer as HfTokenizer } from '@huggingface/tokenizers';
import type { ChatTemplateSpec } from './chatTemplate.js';
import { spellingFinder } from './counter.js';
import type { TokenizerKind } from './kinds.js';
import { speedUpLongWords } from './longWords.js';
import { modelFolderLabel, modelFolderProblem, resolveModelFolder } from './resolve.js';
import { TokenizerError, type Tokenizer } from './tokenizer.js';

export interface ModelTokenizer extends Tokenizer {
  readonly kind: 'model';
}

async function readJson(path: string, what: string, required: boolean): Promise<Record<string, unknown> | null> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (err) {
    if (!required && (err as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw new TokenizerError(`${what} could not be read: ${(err as Error).message}`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    throw new TokenizerError(`${what} is not valid JSON (${(err as Error).message})`);
  }
  if (typeof value !== 'object' || value === null || Array.isArray(value)) throw new TokenizerError(`${what} is not a JSON object`);
  return value as Record<string, unknown>;
}

/** A special-token value of tokenizer_config.json: a string, or an object with `content` (older configs). */
function tokenText(v: unknown): string | null {
  if (typeof v === 'string') return v;
  if (typeof v === 'object' && v !== null && typeof (v as { content?: unknown }).content === 'string') return (v as { content: string }).content;
  return null;
}

/** The chat template named `default` (or the first) when the config holds a list of named templates. */
function pickTemplate(v: unknown): string | null {
  if (typeof v === 'string') return v;
  if (Array.isArray(v)) {
    const named = v.filter((t): t is { name: unknown; template: string } => typeof t?.template === 'string');
    return (named.find((t) => t.name === 'default') ?? named[0])?.template ?? null;
  }
  return null;
}

async function chatTemplateOf(folder: string, config: Record<string, unknown>): Promise<ChatTemplateSpec | null> {
  let source: string | null = null;
  let origin = '';
  // A template file beside the config takes precedence over the config's own entry (common practice of the model-hub library).
  const jinja = join(folder, 'chat_template.jinja');
  if (existsSync(jinja)) {
    try {
      source = await readFile(jinja, 'utf8');
    } catch (err) {
      throw new TokenizerError(`${jinja} could not be read: ${(err as Error).message}`);
    }
    origin = 'chat_template.jinja';
  } else {
    const json = await readJson(join(folder, 'chat_template.json'), `${join(folder, 'chat_template.json')}`, false);
    const fromJson = json ? pickTemplate(json.chat_template) : null;
    if (fromJson !== null) {
      source = fromJson;
      origin = 'chat_template.json';
    } else {
      source = pickTemplate(config.chat_template);
      origin = 'tokenizer_config.json';
    }
  }
  if (source === null) return null;
  const specials: Record<string, string> = {};
  for (const [key, v] of Object.entries(config)) {
    if (!key.endsWith('_token')) continue;
    const t = tokenText(v);
    if (t !== null) specials[key] = t;
  }
  if (Array.isArray(config.additional_special_tokens)) {
    (specials as Record<string, unknown>).additional_special_tokens = config.additional_special_tokens.map(tokenText).filter((t) => t !== null);
  }
  return { source, origin, specials };
}

interface AddedToken {
  id: number;
  content: string;
  special?: boolean;
  lstrip?: boolean;
  rstrip?: boolean;
  single_word?: boolean;
}

/** Counts of strings already counted: a count is a pure function of its string, so the cache is exact. */
class CountCache {
  private map = new Map<string, number>();
  constructor(private readonly limit = 50_000, private readonly longest = 16_384) {}
  get(text: string, count: (t: string) => number): number {
    if (text.length > this.longest) return count(text);
    const hit = this.map.get(text);
    if (hit !== undefined) return hit;
    const n = count(text);
    if (this.map.size >= this.limit) this.map.clear();
    this.map.set(text, n);
    return n;
  }
}

/** Loads a model folder (or a tokenizer.json file's path). Throws TokenizerError with a clear message. */
export async function loadModelTokenizer(path: string): Promise<ModelTokenizer> {
  const problem = modelFolderProblem(path);
  if (problem) throw new TokenizerError(`Tokenizer not loaded: ${problem}.`);
  const isFile = statSync(path).isFile();
  const folder = isFile ? join(path, '..') : path;
  const tokenizerPath = isFile ? path : join(folder, 'tokenizer.json');
  const json = (await readJson(tokenizerPath, tokenizerPath, true))!;
  const config = (await readJson(join(folder, 'tokenizer_config.json'), join(folder, 'tokenizer_config.json'), false)) ?? {};
  if (typeof json.model !== 'object' || json.model === null) throw new TokenizerError(`${tokenizerPath} has no "model" section: it is not a tokenizer.json file`);
  let hf: HfTokenizer;
  try {
    hf = new HfTokenizer(json, config);
  } catch (err) {
    throw new TokenizerError(`${tokenizerPath} could not be read as a tokenizer: ${(err as Error).message}`);
  }
  speedUpLongWords(hf.model);
  const template = await chatTemplateOf(folder, config);
  const added = (Array.isArray(json.added_tokens) ? json.added_tokens : []) as AddedToken[];
  // Control tokens are the added tokens marked special; the others (Gemma's runs of newlines or
  // spaces, say) are vocabulary, split out of the text all the same.
  const specialTokens: Record<string, number> = {};
  const addedSpellings: string[] = [];
  for (const t of added) {
    if (typeof t?.content !== 'string' || typeof t.id !== 'number') continue;
    addedSpellings.push(t.content);
    if (t.special) specialTokens[t.content] = t.id;
  }
  Object.freeze(specialTokens);

  const ids = (text: string) => hf.encode(text, { add_special_tokens: false }).ids;
  const countPlain = (text: string) => (text === '' ? 0 : ids(text).length);
  const cache = new CountCache();
  // Added tokens are split out of the text before normalising and pre-tokenising, so the pieces
  // between them count on their own — exact unless a token strips white space beside it, or a
  // Metaspace/Prepend step treats the text's first piece differently from the others.
  const shape = JSON.stringify([json.normalizer ?? null, json.pre_tokenizer ?? null]);
  const splitExact = added.every((t) => !t.lstrip && !t.rstrip && !t.single_word) && !/"(Metaspace|Prepend)"/.test(shape);
  const findAdded = spellingFinder(addedSpellings);
  const findSpecial = spellingFinder(Object.keys(specialTokens));
  const label = modelFolderLabel(isFile ? folder : path);
  const countRendered = (text: string): number => {
    if (!splitExact) return countPlain(text);
    let n = 0;
    let from = 0;
    for (const hit of findAdded(text)) {
      if (hit.index > from) n += cache.get(text.slice(from, hit.index), countPlain);
      n++;
      from = hit.index + hit.token.length;
    }
    if (from < text.length) n += cache.get(text.slice(from), countPlain);
    return n;
  };
  return {
    name: path,
    label,
    kind: 'model',
    specialTokens,
    specialsInContent: 'control',
    chatTemplate: template,
    specialTextNote: (text) => {
      const hits = findSpecial(text);
      if (hits.length === 0) return null;
      const names = [...new Set(hits.map((h) => h.token))].map((n) => `"${n}"`).join(', ');
      return (
        `Text spells the control token${hits.length > 1 ? 's' : ''} ${names} of ${label} (${hits.length === 1 ? 'once' : `${hits.length} times`}); ` +
        "the model's tokenizer reads a control token there, not the text."
      );
    },
    count: (text) => (splitExact ? countRendered(text) : cache.get(text, countPlain)),
    encode: ids,
    countRendered,
    encodeRendered: ids,
  };
}

/** The second tokenizer kind: a model folder holding tokenizer.json, or that file's path; claims every value the encodings leave. */
export const modelFolderKind: TokenizerKind = {
  kind: 'model',
  written: 'a model folder holding tokenizer.json',
  claims: () => true,
  resolve: resolveModelFolder,
  problem: modelFolderProblem,
  label: modelFolderLabel,
  chatTemplates: true,
  load: loadModelTokenizer,
};
