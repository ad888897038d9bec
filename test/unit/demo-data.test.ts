// The demo shards: made by the committed generator (same bytes on a re-run), and the manifest
// names exactly the broken records, judged by independent oracles rather than by our engine:
// JSON.parse (RFC 8259), TextDecoder in fatal mode (WHATWG Encoding / RFC 3629), ajv (JSON Schema
// 2020-12), js-tiktoken (the cl100k_base reference port), apache-arrow and hyparquet (readers),
// node:zlib (RFC 1950 inflate, CRC-32) for the PNG files (W3C PNG). The layout verdicts come from
// small predicates written here from the layout descriptions (common practice of the trade, not a
// standard). The last block runs our CLI on the layout shards: an integration test, not an oracle.

import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import zlib from 'node:zlib';
import { fileURLToPath } from 'node:url';
import Ajv2020Module from 'ajv/dist/2020.js';
import { getEncoding } from 'js-tiktoken';
import { tableFromIPC } from 'apache-arrow';
import { parquetMetadata, parquetReadObjects } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { allRules } from '../../src/engine/rules';
import { buildBundles } from './helpers/build';

const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const demo = path.join(projectRoot, 'demo-data');
const CONTEXT = 8192;

/** The shards of the training-data layouts are judged by their layout's predicates below. */
type Layout = 'turns' | 'instruction' | 'prompt-completion' | 'preference' | 'feedback' | 'eval';
type Kind = 'chat' | 'pairs' | 'text' | Layout;
interface Broken { file: string; line?: number; row?: number; what: string; rules: string[] }
interface Manifest { files: Record<string, { lines?: number; rows?: number; layout?: string }>; broken: Broken[]; absent: { rule: string }[] }

const manifest: Manifest = JSON.parse(fs.readFileSync(path.join(demo, 'manifest.json'), 'utf8'));
const settings = JSON.parse(fs.readFileSync(path.join(demo, '.vscode/settings.json'), 'utf8'));
const schema = JSON.parse(fs.readFileSync(path.join(demo, 'chat-sft.schema.json'), 'utf8'));
const Ajv2020 = ((Ajv2020Module as unknown as { default?: unknown }).default ?? Ajv2020Module) as typeof Ajv2020Module;
const validate = new Ajv2020({ allErrors: true, strict: false }).compile(schema);
const cl100k = getEncoding('cl100k_base');

const KIND: Record<string, Kind> = {
  'chat-sft.jsonl': 'chat', 'chat-sft-from-value.jsonl': 'chat', 'edge-cases.jsonl': 'chat',
  'chat-sft.parquet': 'chat', 'chat-sft.arrow': 'chat',
  'preference-pairs.jsonl': 'pairs', 'plain-text.jsonl': 'text', 'plain-text.arrows': 'text',
  'tool-calls.jsonl': 'turns', 'workshop-chats-from-value.jsonl': 'turns', 'multimodal.jsonl': 'turns',
  'kiosk-chats.json': 'turns', 'train-00000-of-00001': 'turns', 'instruction.jsonl': 'instruction',
  'prompt-completion.jsonl': 'prompt-completion', 'preference-transcripts.jsonl': 'preference',
  'preference-messages.jsonl': 'preference', 'feedback.jsonl': 'feedback', 'eval-items.jsonl': 'eval',
};
const LAYOUT_KINDS = new Set<Kind>(['turns', 'instruction', 'prompt-completion', 'preference', 'feedback', 'eval']);
const isLayoutKind = (k: Kind): k is Layout => LAYOUT_KINDS.has(k);

/** Whether the demo workspace's `shardwise.schemas` globs give this file the schema. */
function hasSchema(file: string): boolean {
  return Object.keys(settings['shardwise.schemas']).some((glob) =>
    new RegExp('^' + glob.replace(/[.]/g, '\\.').replace(/\*/g, '[^/]*') + '$').test(file));
}

/** Walks a valid JSON text for what JSON.parse hides: repeated keys and integers past ±(2^53−1) (RFC 8259 §4 and §6). */
function scanJson(text: string): { duplicateKey: boolean; unsafeInteger: boolean } {
  const stack: (Set<string> | null)[] = [];
  let expectKey = false;
  let duplicateKey = false;
  let unsafeInteger = false;
  const limit = 2n ** 53n - 1n;
  for (let i = 0; i < text.length;) {
    const c = text[i];
    if (c === '"') {
      let j = i + 1;
      while (text[j] !== '"') j += text[j] === '\\' ? 2 : 1;
      const top = stack[stack.length - 1];
      if (top && expectKey) {
        const key = JSON.parse(text.slice(i, j + 1)) as string;
        if (top.has(key)) duplicateKey = true;
        top.add(key);
        expectKey = false;
      }
      i = j + 1;
      continue;
    }
    if (c === '-' || (c >= '0' && c <= '9')) {
      let j = i;
      while (j < text.length && /[-+0-9.eE]/.test(text[j])) j++;
      const num = text.slice(i, j);
      if (/^-?\d+$/.test(num)) {
        const n = BigInt(num);
        if (n > limit || n < -limit) unsafeInteger = true;
      }
      i = j;
      continue;
    }
    if (c === '{') { stack.push(new Set()); expectKey = true; }
    else if (c === '[') stack.push(null);
    else if (c === '}' || c === ']') stack.pop();
    else if (c === ',') expectKey = stack[stack.length - 1] instanceof Set;
    i++;
  }
  return { duplicateKey, unsafeInteger };
}

function strings(v: unknown, out: string[] = []): string[] {
  if (typeof v === 'string') out.push(v);
  else if (Array.isArray(v)) v.forEach((x) => strings(x, out));
  else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) { out.push(k); strings(x, out); }
  return out;
}

const isObject = (v: unknown): v is Record<string, unknown> => !!v && typeof v === 'object' && !Array.isArray(v);
// Speaker names as the layout description maps them (common practice of speaker lists).
const ROLE: Record<string, string> = {
  system: 'system', user: 'user', assistant: 'assistant', tool: 'tool', human: 'user', gpt: 'assistant',
  function_call: 'assistant', observation: 'tool',
};

/** A content value's text: a string, or the text of its text parts (`text` or `value`). */
function contentText(content: unknown): string {
  if (typeof content === 'string') return content;
  if (!Array.isArray(content)) return '';
  return content.map((p) => (typeof p === 'string' ? p : isObject(p) && (p.type === undefined || p.type === 'text') ? String(p.text ?? p.value ?? '') : '')).join('');
}

/** The chat rules as the brief defines them (common practice for role/content chat data). */
function chatRules(rec: Record<string, unknown>): string[] {
  return turnRules('messages' in rec ? rec.messages : rec.conversations);
}

function turnRules(turns: unknown): string[] {
  const out = new Set<string>();
  if (!Array.isArray(turns)) return ['chat-turns-not-list'];
  if (turns.length === 0) return ['chat-turns-empty'];
  const seq: string[] = [];
  const calls = new Set<string>();
  const usesIds = turns.some((t) => isObject(t) && ('tool_call_id' in t || Array.isArray(t.tool_calls)));
  for (const t of turns) {
    if (!isObject(t)) { out.add('chat-turn-not-object'); continue; }
    const raw = (t.role ?? t.from) as string | undefined;
    if (raw === undefined) { out.add('chat-role-missing'); continue; }
    const role = ROLE[raw];
    if (!role) { out.add('chat-role-unknown'); continue; }
    const content = 'content' in t ? t.content : t.value;
    const toolCalls = Array.isArray(t.tool_calls) ? t.tool_calls : [];
    // Tool calls and non-text parts (images, reasoning) are content without text.
    const nonText = Array.isArray(content) && content.some((p) => isObject(p) && p.type !== undefined && p.type !== 'text');
    if (toolCalls.length === 0 && raw !== 'function_call' && !nonText && contentText(content).trim() === '') out.add('chat-content-empty');
    if (role === 'system' && seq.some((r) => r !== 'system')) out.add('chat-system-misplaced');
    // Tool after tool is legal: parallel calls get one answer each (README, chat-role-repeated).
    if (role !== 'system' && role !== 'tool' && seq.length > 0 && seq[seq.length - 1] === role) out.add('chat-role-repeated');
    for (const c of toolCalls) calls.add((c as { id: string }).id);
    // Speaker lists carry no call ids: only a conversation that uses them is held to them.
    if (role === 'tool' && usesIds && !calls.has(t.tool_call_id as string)) out.add('chat-tool-orphan');
    seq.push(role);
  }
  const first = seq.find((r) => r !== 'system');
  if (first !== undefined && first !== 'user') out.add('chat-first-not-user');
  if (seq.length > 0 && seq[seq.length - 1] !== 'assistant') out.add('chat-last-not-assistant');
  return [...out];
}

function pairRules(rec: Record<string, unknown>): string[] {
  const out: string[] = [];
  const empty = (v: unknown) => v === null || (typeof v === 'string' && v.trim() === '') || (Array.isArray(v) && v.length === 0);
  for (const side of ['chosen', 'rejected']) {
    if (!(side in rec)) out.push('pair-side-missing');
    else if (empty(rec[side])) out.push('pair-side-empty');
  }
  if (out.length) return [...new Set(out)];
  const { chosen, rejected } = rec;
  if (JSON.stringify(chosen) === JSON.stringify(rejected)) return ['pair-identical'];
  if (Array.isArray(chosen) && Array.isArray(rejected) && JSON.stringify(chosen.slice(0, -1)) !== JSON.stringify(rejected.slice(0, -1))) return ['pair-prompt-mismatch'];
  return [];
}

// ---- layout predicates, written from the layout descriptions (common practice, no standard)

const TURN_KEYS = ['messages', 'conversations', 'conversation', 'dialog'];
const turnsKeyOf = (rec: Record<string, unknown>) => TURN_KEYS.find((k) => k in rec);
const normalised = (text: string) => text.trim().replace(/\s+/g, ' ');

/** The layout a record fits by its keys alone; null when no layout finds text in it. */
function fitsLayout(rec: Record<string, unknown>): Layout | 'text' | null {
  if (['chosen', 'rejected', 'chosen_messages', 'rejected_messages'].some((k) => k in rec)) return 'preference';
  if ('label' in rec && ('completion' in rec || turnsKeyOf(rec))) return 'feedback';
  if ('prompt' in rec && 'completion' in rec) return 'prompt-completion';
  if (turnsKeyOf(rec)) return 'turns';
  if ('instruction' in rec) return 'instruction';
  if (('question' in rec && 'answer' in rec) || ('problem' in rec && 'solution' in rec)) return 'eval';
  if (Array.isArray(rec.turns) && rec.turns.length > 0 && rec.turns.every((t) => typeof t === 'string')) return 'eval';
  if (Object.values(rec).some((v) => typeof v === 'string')) return 'text';
  return null;
}

/** tool-arguments-invalid: a call's `arguments` is a string that JSON.parse rejects (or a `function_call` speaker's value is). */
function argumentsStringFailsJsonParse(turns: unknown[]): boolean {
  const fails = (text: unknown) => {
    if (typeof text !== 'string') return false;
    try { JSON.parse(text); return false; } catch { return true; }
  };
  return turns.some((t) => isObject(t) && (
    (t.from === 'function_call' && fails(t.value)) ||
    (Array.isArray(t.tool_calls) && t.tool_calls.some((c) => isObject(c) && isObject(c.function) && fails(c.function.arguments)))));
}

// Part types the layout description names: text, reasoning/thinking, tool calls, image/audio/video.
const KNOWN_PART_TYPES = new Set(['text', 'reasoning', 'thinking', 'tool_call', 'image', 'audio', 'video']);

/** part-type-unknown: a content part whose `type` is none of the described ones. */
function partTypeNotDescribed(turns: unknown[]): boolean {
  return turns.some((t) => isObject(t) && Array.isArray(t.content) &&
    t.content.some((p) => isObject(p) && typeof p.type === 'string' && !KNOWN_PART_TYPES.has(p.type)));
}

/** A relative file path: not a URL or `data:` URL, not absolute. */
const isRelativePath = (loc: string) => loc !== '' && !/^[a-z][a-z0-9+.-]*:/i.test(loc) && !path.isAbsolute(loc);

/** media-count-mismatch and media-path-missing: placeholder count ≠ list length; a relative path fs.existsSync does not find. */
function mediaRules(rec: Record<string, unknown>, turns: unknown[]): string[] {
  const out: string[] = [];
  const text = turns.map((t) => (isObject(t) ? contentText(t.content ?? t.value) : '')).join('\n');
  for (const [mark, key] of [['<image>', 'images'], ['<video>', 'videos'], ['<audio>', 'audios']]) {
    const marks = text.split(mark).length - 1;
    const listed = Array.isArray(rec[key]) ? (rec[key] as unknown[]).length : 0;
    if ((key in rec || marks > 0) && marks !== listed) out.push('media-count-mismatch');
  }
  const locations: unknown[] = [...(Array.isArray(rec.images) ? rec.images : [])];
  for (const t of turns) {
    if (isObject(t) && Array.isArray(t.content)) for (const p of t.content) if (isObject(p) && p.type === 'image') locations.push(p.image ?? p.path);
  }
  if (locations.some((l) => typeof l === 'string' && isRelativePath(l) && !fs.existsSync(path.join(demo, l)))) out.push('media-path-missing');
  return out;
}

/** Every rule on one conversation: the chat rules, tool-call arguments, part types, media. */
function conversationRules(rec: Record<string, unknown>, turns: unknown): string[] {
  const out = turnRules(turns);
  if (!Array.isArray(turns)) return out;
  if (argumentsStringFailsJsonParse(turns)) out.push('tool-arguments-invalid');
  if (partTypeNotDescribed(turns)) out.push('part-type-unknown');
  return [...out, ...mediaRules(rec, turns)];
}

/** An answer side as a turn: a string is the assistant's text; a turn object stands for itself. */
const asTurn = (side: unknown) => (typeof side === 'string' ? { role: 'assistant', content: side } : side);

/** Splits a `\n\nHuman:` / `\n\nAssistant:` transcript into [speaker, text]; null when it has not both markers. */
function splitTranscript(text: string): [string, string][] | null {
  if (!text.includes('Human:') || !text.includes('\n\nAssistant:')) return null;
  return text.split(/\n\n(?=(?:Human|Assistant):)/).filter((seg) => seg !== '').map((seg) => {
    const m = /^(Human|Assistant): ?([\s\S]*)$/.exec(seg);
    return m ? [m[1], m[2]] as [string, string] : ['?', seg];
  });
}

/** The pair rules on every pair form: sides present and not empty, the same prompt, different answers. */
function preferenceRules(rec: Record<string, unknown>): string[] {
  const out = new Set<string>();
  const key = (names: string[]) => names.find((k) => k in rec);
  const sides = [key(['chosen', 'chosen_messages']), key(['rejected', 'rejected_messages'])].map((k) => (k === undefined ? undefined : rec[k]));
  for (const v of sides) {
    if (v === undefined) out.add('pair-side-missing');
    else if ((typeof v === 'string' && v.trim() === '') || (Array.isArray(v) && v.length === 0) || v === null) out.add('pair-side-empty');
  }
  if (out.size > 0) return [...out];
  const [chosen, rejected] = sides;
  const transcripts = typeof chosen === 'string' && typeof rejected === 'string' ? [splitTranscript(chosen), splitTranscript(rejected)] : [null, null];
  const [tc, tr] = transcripts;
  if (tc && tr) {
    // The prompt of a transcript: every turn up to its last Human turn.
    const prompt = (t: [string, string][]) => t.slice(0, t.map((x) => x[0]).lastIndexOf('Human') + 1).map((x) => `${x[0]}:${normalised(x[1])}`).join('\n');
    for (const t of [tc, tr]) if (t[t.length - 1][0] !== 'Assistant') out.add('chat-last-not-assistant');
    if (prompt(tc) !== prompt(tr)) out.add('pair-prompt-mismatch');
    else if (normalised(chosen as string) === normalised(rejected as string)) out.add('pair-identical');
    return [...out];
  }
  const promptKey = turnsKeyOf(rec);
  if (promptKey !== undefined) {
    const promptTurns = Array.isArray(rec[promptKey]) ? (rec[promptKey] as unknown[]) : [];
    for (const side of sides) for (const r of turnRules([...promptTurns, asTurn(side)])) out.add(r);
  }
  const answer = (v: unknown) => normalised(typeof v === 'string' ? v : contentText(isObject(v) ? v.content : undefined));
  if (answer(chosen) === answer(rejected)) out.add('pair-identical');
  return [...out];
}

/** The verdict of a record in a layout shard: layout-mismatch, then the rules of the layout it fits. */
function layoutRules(rec: Record<string, unknown>, shard: Layout): string[] {
  const fits = fitsLayout(rec);
  if (fits === null) return ['tokens-no-text'];
  const out: string[] = [];
  if (fits !== shard) {
    // In a chat shard a record with no conversation is a chat record without turns.
    if (shard === 'turns' && fits === 'text') return ['chat-turns-not-list'];
    out.push('layout-mismatch');
  }
  if (fits === 'turns') out.push(...conversationRules(rec, rec[turnsKeyOf(rec)!]));
  if (fits === 'instruction' && (typeof rec.output !== 'string' || rec.output.trim() === '')) out.push('instruction-output-missing');
  if (fits === 'feedback' && typeof rec.label !== 'boolean') out.push('feedback-label-invalid');
  if ((fits === 'prompt-completion' || fits === 'feedback') && Array.isArray(rec.prompt)) {
    // A turn-list prompt with its completion is one conversation; a string completion is the assistant's turn.
    out.push(...conversationRules(rec, [...rec.prompt, ...(Array.isArray(rec.completion) ? rec.completion : [asTurn(rec.completion)])]));
  }
  if (fits === 'feedback' && !('completion' in rec)) out.push(...conversationRules(rec, rec[turnsKeyOf(rec)!]));
  if (fits === 'preference') out.push(...preferenceRules(rec));
  return out;
}

/** Every string value of a record (keys left out): an upper bound on a layout record's content text. */
function stringValues(v: unknown, out: string[] = []): string[] {
  if (typeof v === 'string') out.push(v);
  else if (Array.isArray(v)) v.forEach((x) => stringValues(x, out));
  else if (isObject(v)) Object.values(v).forEach((x) => stringValues(x, out));
  return out;
}

function recordText(rec: Record<string, unknown>, kind: Kind): string {
  if (isLayoutKind(kind)) return stringValues(rec).join('\n');
  if (kind === 'text') return typeof rec.text === 'string' ? rec.text : '';
  const turns = rec.messages ?? rec.conversations;
  return Array.isArray(turns) ? turns.map((t) => (isObject(t) ? String(t.content ?? t.value ?? '') : '')).join('\n') : '';
}

/** Rules for one parsed record, whatever shard it came from. */
function recordRules(value: unknown, file: string, byteLength: number): string[] {
  const kind = KIND[file];
  const out: string[] = [];
  if (!isObject(value)) out.push('record-not-object');
  if (hasSchema(file) && !validate(value)) out.push('schema-violation');
  if (!isObject(value)) return out;
  if (kind === 'chat') out.push(...chatRules(value));
  if (kind === 'pairs') out.push(...pairRules(value));
  if (isLayoutKind(kind)) out.push(...layoutRules(value, kind));
  // Special-token spellings of cl100k_base and the im_start/im_end chat markers (from memory).
  if (strings(value).some((s) => /<\|(endoftext|im_start|im_end|fim_prefix|fim_middle|fim_suffix|endofprompt)\|>/.test(s))) out.push('tokens-special-text');
  if (strings(value).some((s) => /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/.test(s))) out.push('surrogate-unpaired');
  // A token covers at least one byte, so only records longer than the context in bytes can overflow it.
  if (byteLength > CONTEXT && cl100k.encode(recordText(value, kind), [], []).length > CONTEXT) out.push('tokens-over-context');
  return out;
}

/** Rules for one JSONL line (JSON Lines: UTF-8, one value a line, CRLF tolerated, no BOM). */
function lineRules(bytes: Buffer, lineNo: number, file: string): string[] {
  const out: string[] = [];
  let b = bytes[bytes.length - 1] === 0x0d ? bytes.subarray(0, -1) : bytes;
  if (lineNo === 1 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) { out.push('bom-present'); b = b.subarray(3); }
  let text: string;
  try { text = new TextDecoder('utf-8', { fatal: true }).decode(b); }
  catch { out.push('utf8-invalid'); text = new TextDecoder('utf-8').decode(b); }
  if (text.trim() === '') return [...out, 'line-blank'];
  let value: unknown;
  try { value = JSON.parse(text); } catch { return [...out, 'json-syntax']; }
  const scan = scanJson(text);
  if (scan.duplicateKey) out.push('key-duplicate');
  if (scan.unsafeInteger) out.push('number-unsafe');
  return [...out, ...recordRules(value, file, b.length)];
}

function splitLines(buf: Buffer): Buffer[] {
  const lines: Buffer[] = [];
  let start = 0;
  for (let i = 0; i < buf.length; i++) if (buf[i] === 0x0a) { lines.push(buf.subarray(start, i)); start = i + 1; }
  if (start < buf.length) lines.push(buf.subarray(start));
  return lines;
}

const sorted = (a: string[]) => [...a].sort();
function expectedFor(file: string, key: 'line' | 'row'): Map<number, string[]> {
  return new Map(manifest.broken.filter((b) => b.file === file).map((b) => [b[key] as number, sorted(b.rules)]));
}

function listFiles(dir: string, base = ''): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? listFiles(path.join(dir, e.name), path.join(base, e.name)) : [path.join(base, e.name)]);
}

describe('demo data generator', () => {
  let tmp: string;
  beforeAll(() => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'shardwise-demo-'));
    execFileSync(process.execPath, [path.join(demo, 'generate.mjs'), tmp], { stdio: 'pipe' });
  });
  afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

  it('re-creates every committed data file byte for byte', () => {
    const made = listFiles(tmp).sort();
    const hand = new Set(['generate.mjs', 'scenario.mjs', 'topics.mjs', 'README.md']);
    expect(listFiles(demo).filter((f) => !hand.has(f)).sort()).toEqual(made);
    for (const f of made) expect(fs.readFileSync(path.join(tmp, f)).equals(fs.readFileSync(path.join(demo, f))), f).toBe(true);
  });
});

describe('demo data manifest', () => {
  // JSON Lines by content, whatever the name: `.jsonl`, `.json` and extension-less shards.
  const jsonlFiles = Object.keys(manifest.files).filter((f) => manifest.files[f].lines !== undefined);

  it('names a kind for every shard, and the layout the manifest gives each layout shard', () => {
    for (const f of Object.keys(manifest.files)) expect(KIND[f], f).toBeDefined();
    for (const [f, info] of Object.entries(manifest.files)) if (info.layout !== undefined) expect(KIND[f], f).toBe(info.layout);
    expect(jsonlFiles).toEqual(expect.arrayContaining(['kiosk-chats.json', 'train-00000-of-00001']));
  });

  it.each(jsonlFiles)('%s: the listed lines, and only they, are broken as stated', (file) => {
    const lines = splitLines(fs.readFileSync(path.join(demo, file)));
    expect(lines.length).toBe(manifest.files[file].lines);
    const expected = expectedFor(file, 'line');
    const got = new Map<number, string[]>();
    lines.forEach((l, i) => {
      const rules = lineRules(l, i + 1, file);
      if (rules.length || expected.has(i + 1)) got.set(i + 1, sorted(rules));
    });
    expect(got).toEqual(expected);
  });

  it('covers every rule the checks know except those it explains as absent', () => {
    // The registry names every rule; the demo cannot raise those of a damaged file (family read)
    // nor these, each for its reason.
    const outOfReach: Record<string, string> = {
      'array-structure': 'a JSON array document: the demo shards are JSON Lines, Parquet and Arrow',
      'array-element-syntax': 'a JSON array document: the demo shards are JSON Lines, Parquet and Arrow',
      'schema-timeout': 'a schema that takes seconds on one record',
      'tokens-template-error': 'a model tokenizer with a chat template: the demo counts with a built-in encoding',
      'tokens-rendered-over-context': 'a model tokenizer with a chat template: the demo counts with a built-in encoding',
      'tokens-no-trainable': 'a model tokenizer with a chat template: the demo counts with a built-in encoding',
    };
    const registry = allRules();
    for (const id of Object.keys(outOfReach)) expect(registry.some((r) => r.id === id), id).toBe(true);
    const all = registry.filter((r) => r.family !== 'read' && !(r.id in outOfReach)).map((r) => r.id);
    expect(all.length).toBeGreaterThan(30);
    const present = new Set(manifest.broken.flatMap((b) => b.rules));
    const absent = new Set(manifest.absent.map((a) => a.rule));
    for (const rule of all) expect(present.has(rule) || absent.has(rule), rule).toBe(true);
    for (const rule of absent) expect(present.has(rule), rule).toBe(false);
  });

  /** The clean records of a shard, parsed. */
  const goodRecords = (file: string) => {
    const broken = expectedFor(file, 'line');
    return splitLines(fs.readFileSync(path.join(demo, file))).filter((_, i) => !broken.has(i + 1)).map((l) => JSON.parse(l.toString('utf8')));
  };
  type Rec = Record<string, any>;
  const count = (file: string, pred: (r: Rec) => boolean) => goodRecords(file).filter(pred).length;

  it('each layout shard has 150-400 records, 3-8 of them broken', () => {
    for (const [f, info] of Object.entries(manifest.files)) {
      if (info.layout === undefined) continue;
      expect(info.lines, f).toBeGreaterThanOrEqual(150);
      expect(info.lines, f).toBeLessThanOrEqual(400);
      const broken = expectedFor(f, 'line').size;
      expect(broken, f).toBeGreaterThanOrEqual(3);
      expect(broken, f).toBeLessThanOrEqual(8);
    }
  });

  it('each layout shard holds the forms its layout description names', () => {
    const turns = (r: Rec): Rec[] => r.messages ?? r.conversations ?? r.dialog ?? r.conversation ?? [];
    const parts = (r: Rec): Rec[] => turns(r).flatMap((t) => (Array.isArray(t.content) ? t.content : []));
    // tool-calls: OpenAI-style calls (arguments as JSON strings and as objects), parallel calls, tool answers, a tools list, reasoning parts, weight flags.
    expect(count('tool-calls.jsonl', (r) => Array.isArray(r.tools) && r.tools.length > 0)).toBe(goodRecords('tool-calls.jsonl').length);
    const calls = (r: Rec) => turns(r).flatMap((t) => t.tool_calls ?? []);
    expect(count('tool-calls.jsonl', (r) => calls(r).some((c: Rec) => typeof c.function.arguments === 'string'))).toBeGreaterThan(150);
    expect(count('tool-calls.jsonl', (r) => calls(r).some((c: Rec) => isObject(c.function.arguments)))).toBeGreaterThan(10);
    expect(count('tool-calls.jsonl', (r) => turns(r).some((t) => (t.tool_calls ?? []).length > 1))).toBeGreaterThan(10);
    expect(count('tool-calls.jsonl', (r) => calls(r).some((c: Rec) => c.function.name === 'book_repair_slot'))).toBeGreaterThan(30);
    expect(count('tool-calls.jsonl', (r) => calls(r).some((c: Rec) => c.function.name === 'lookup_part_stock'))).toBeGreaterThan(30);
    expect(count('tool-calls.jsonl', (r) => parts(r).some((p) => p.type === 'reasoning'))).toBeGreaterThan(10);
    expect(count('tool-calls.jsonl', (r) => turns(r).some((t) => t.weight === 0))).toBeGreaterThan(5);
    // from/value: function_call and observation speakers, a system turn.
    const speakers = (r: Rec) => new Set(turns(r).map((t) => t.from));
    expect(count('workshop-chats-from-value.jsonl', (r) => speakers(r).has('function_call') && speakers(r).has('observation'))).toBeGreaterThan(80);
    expect(count('workshop-chats-from-value.jsonl', (r) => speakers(r).has('system'))).toBeGreaterThan(80);
    // instruction: with and without input, some with history, some with system.
    expect(count('instruction.jsonl', (r) => Array.isArray(r.history))).toBeGreaterThan(20);
    expect(count('instruction.jsonl', (r) => typeof r.system === 'string')).toBeGreaterThan(40);
    expect(count('instruction.jsonl', (r) => !('input' in r))).toBeGreaterThan(20);
    // prompt-completion: both strings, both turn lists, a turn-list prompt with a string completion.
    expect(count('prompt-completion.jsonl', (r) => typeof r.prompt === 'string' && typeof r.completion === 'string')).toBeGreaterThan(50);
    expect(count('prompt-completion.jsonl', (r) => Array.isArray(r.prompt) && Array.isArray(r.completion))).toBeGreaterThan(50);
    expect(count('prompt-completion.jsonl', (r) => Array.isArray(r.prompt) && typeof r.completion === 'string')).toBeGreaterThan(20);
    // preference: whole transcripts; a messages prompt with string and with turn-object answers.
    expect(count('preference-transcripts.jsonl', (r) => r.chosen.startsWith('\n\nHuman: ') && r.chosen.includes('\n\nAssistant: '))).toBe(goodRecords('preference-transcripts.jsonl').length);
    expect(count('preference-transcripts.jsonl', (r) => r.chosen.split('\n\nHuman:').length > 2)).toBeGreaterThan(40);
    expect(count('preference-messages.jsonl', (r) => typeof r.chosen === 'string')).toBeGreaterThan(50);
    expect(count('preference-messages.jsonl', (r) => isObject(r.chosen) && r.chosen.role === 'assistant')).toBeGreaterThan(50);
    // feedback: both labels.
    expect(count('feedback.jsonl', (r) => r.label === true)).toBeGreaterThan(50);
    expect(count('feedback.jsonl', (r) => r.label === false)).toBeGreaterThan(50);
    // multimodal: image parts by relative path and inline base64, `<image>` placeholders beside an images list.
    const images = (r: Rec) => parts(r).filter((p) => p.type === 'image').map((p) => p.image as string);
    expect(count('multimodal.jsonl', (r) => images(r).some((i) => i.startsWith('media/')))).toBeGreaterThan(30);
    expect(count('multimodal.jsonl', (r) => images(r).some((i) => i.startsWith('data:image/png;base64,')))).toBeGreaterThan(20);
    expect(count('multimodal.jsonl', (r) => Array.isArray(r.images) && r.images.length === 2)).toBeGreaterThan(10);
    expect(count('multimodal.jsonl', (r) => parts(r).some((p) => p.type === 'text' && 'value' in p))).toBeGreaterThan(5);
    // eval: question/answer, problem/solution, turns as a list of strings.
    expect(count('eval-items.jsonl', (r) => 'question' in r && 'answer' in r)).toBeGreaterThan(50);
    expect(count('eval-items.jsonl', (r) => 'problem' in r && 'solution' in r)).toBeGreaterThan(50);
    expect(count('eval-items.jsonl', (r) => Array.isArray(r.turns))).toBeGreaterThan(5);
  });

  it('chat-sft.jsonl has the size and mix the demo needs', () => {
    const lines = splitLines(fs.readFileSync(path.join(demo, 'chat-sft.jsonl')));
    const broken = expectedFor('chat-sft.jsonl', 'line');
    const good = lines.filter((_, i) => !broken.has(i + 1)).map((l) => JSON.parse(l.toString('utf8')));
    expect(good.length).toBeGreaterThanOrEqual(2000);
    expect(broken.size / lines.length).toBeLessThan(0.05);
    expect(good.filter((r) => r.messages.some((t: { tool_calls?: unknown }) => t.tool_calls)).length).toBeGreaterThan(20);
    expect(good.filter((r) => r.messages[0].role === 'system').length).toBeGreaterThan(100);
    expect(good.filter((r) => r.messages.length >= 6).length).toBeGreaterThan(100);
    expect([...broken.values()].filter((r) => r.includes('tokens-over-context')).length).toBeGreaterThan(0);
  });
});

describe('demo data images', () => {
  const files = fs.readdirSync(path.join(demo, 'media')).map((f) => `media/${f}`);

  // W3C PNG (Portable Network Graphics, 3rd ed.): signature, chunks with CRC-32, IHDR, a zlib (RFC 1950) IDAT.
  it.each(files)('%s is a valid 16×16 truecolour PNG', (file) => {
    const b = fs.readFileSync(path.join(demo, file));
    expect([...b.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    const chunks: { type: string; data: Buffer }[] = [];
    for (let i = 8; i < b.length;) {
      const n = b.readUInt32BE(i);
      const type = b.toString('latin1', i + 4, i + 8);
      const data = b.subarray(i + 8, i + 8 + n);
      expect(zlib.crc32(b.subarray(i + 4, i + 8 + n)), `${type} CRC`).toBe(b.readUInt32BE(i + 8 + n));
      chunks.push({ type, data });
      i += 12 + n;
    }
    expect(chunks.map((c) => c.type)).toEqual(['IHDR', 'IDAT', 'IEND']);
    const ihdr = chunks[0].data;
    expect([ihdr.readUInt32BE(0), ihdr.readUInt32BE(4), ihdr[8], ihdr[9]]).toEqual([16, 16, 8, 2]);
    const pixels = zlib.inflateSync(chunks[1].data);
    expect(pixels.length).toBe(16 * (1 + 16 * 3));
    expect(new Set(Array.from({ length: 16 }, (_, y) => pixels[y * 49])).size).toBe(1);
  });

  it('inline images are base64 (RFC 4648) of the shipped PNG files', () => {
    const shipped = new Set(files.map((f) => fs.readFileSync(path.join(demo, f)).toString('hex')));
    const lines = splitLines(fs.readFileSync(path.join(demo, 'multimodal.jsonl')));
    let inline = 0;
    for (const l of lines) {
      for (const m of l.toString('utf8').matchAll(/"data:image\/png;base64,([A-Za-z0-9+/=]+)"/g)) {
        inline++;
        expect(shipped.has(Buffer.from(m[1], 'base64').toString('hex'))).toBe(true);
      }
    }
    expect(inline).toBeGreaterThan(20);
  });
});

describe('demo data columnar copies', () => {
  const buf = (f: string) => fs.readFileSync(path.join(demo, f));
  const arrayBuffer = (b: Buffer) => b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
  type Row = { id: string; source: string; lang: string; created: string; messages: { role: string; content: string | null }[] };

  function arrowRows(file: string): Row[] {
    const table = tableFromIPC(buf(file));
    return table.toArray().map((r) => {
      const o = r.toJSON() as Record<string, unknown>;
      const m = o.messages as { toArray(): { toJSON(): unknown }[] } | undefined;
      return { ...o, ...(m ? { messages: m.toArray().map((t) => t.toJSON()) } : {}) } as Row;
    });
  }

  it('chat-sft.arrow and chat-sft.parquet hold the same rows, in batches and row groups of 250', async () => {
    const arrow = tableFromIPC(buf('chat-sft.arrow'));
    expect(arrow.batches.length).toBeGreaterThanOrEqual(4);
    expect(arrow.numRows).toBe(manifest.files['chat-sft.arrow'].rows);
    const pq = arrayBuffer(buf('chat-sft.parquet'));
    const meta = parquetMetadata(pq);
    expect(meta.row_groups.length).toBeGreaterThanOrEqual(4);
    expect(meta.row_groups.every((g) => Number(g.num_rows) <= 250)).toBe(true);
    expect(meta.row_groups[0].columns[0].meta_data?.codec).toBe('ZSTD');
    const fromParquet = await parquetReadObjects({ file: pq, compressors });
    expect(fromParquet).toEqual(arrowRows('chat-sft.arrow'));
  });

  it('columnar rows are the JSONL chats they copy, except the listed broken rows', () => {
    const byId = new Map(splitLines(buf('chat-sft.jsonl')).flatMap((l) => {
      try { return [[JSON.parse(l.toString('utf8')).id, JSON.parse(l.toString('utf8'))]]; } catch { return []; }
    }));
    const rows = arrowRows('chat-sft.arrow');
    for (const file of ['chat-sft.arrow', 'chat-sft.parquet']) {
      const expected = expectedFor(file, 'row');
      const got = new Map<number, string[]>();
      rows.forEach((row, i) => {
        const rules = recordRules(row, file, 0);
        if (rules.length || expected.has(i)) got.set(i, sorted(rules));
        if (!expected.has(i)) {
          const { ticket_id: _ticket, ...src } = byId.get(row.id);
          expect(row).toEqual(src);
        }
      });
      expect(got).toEqual(expected);
    }
  });

  it('plain-text.arrows is an Arrow stream of the valid plain-text records', () => {
    const rows = arrowRows('plain-text.arrows');
    const expected = expectedFor('plain-text.jsonl', 'line');
    const good = splitLines(buf('plain-text.jsonl')).filter((_, i) => !expected.has(i + 1)).map((l) => JSON.parse(l.toString('utf8')));
    expect(rows).toEqual(good);
    expect(tableFromIPC(buf('plain-text.arrows')).batches.length).toBeGreaterThan(1);
  });
});

// Integration, not an oracle: our CLI on each layout shard must settle on the shard's layout and
// report exactly the manifest's broken records (rule ids at their lines), nothing more.
describe('demo layout shards through the CLI', () => {
  const layoutFiles = Object.keys(manifest.files).filter((f) => manifest.files[f].layout !== undefined);
  const fingerprint = (f: string) => `${createHash('sha256').update(fs.readFileSync(path.join(demo, f))).digest('hex')} ${fs.statSync(path.join(demo, f)).mtimeMs}`;
  const before = new Map(layoutFiles.map((f) => [f, fingerprint(f)]));
  let cli = '';
  beforeAll(() => {
    cli = path.join(buildBundles(), 'cli.js');
  }, 120_000);
  // Read-only, always: checking a shard never changes a byte of it, nor its modification time.
  afterAll(() => {
    for (const f of layoutFiles) expect(fingerprint(f), f).toBe(before.get(f));
  });

  it.each(layoutFiles)('%s: the layout, and findings exactly the manifest\'s broken records', (file) => {
    const r = spawnSync(process.execPath, [cli, 'check', path.join(demo, file), '--format', 'json'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBeLessThan(2);
    const doc = JSON.parse(r.stdout);
    expect(doc.files[0].layout).toBe(KIND[file]);
    const got = new Set<string>(doc.files[0].findings.map((f: { line: number | null; rule: string }) => `line ${f.line} ${f.rule}`));
    const want = new Set<string>();
    for (const b of manifest.broken.filter((x) => x.file === file)) for (const rule of b.rules) want.add(`line ${b.line} ${rule}`);
    expect([...got].sort()).toEqual([...want].sort());
  }, 60_000);
});
