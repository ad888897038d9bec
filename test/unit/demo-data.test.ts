// The demo shards: made by the committed generator (same bytes on a re-run), and the manifest
// names exactly the broken records, judged by independent oracles rather than by our engine:
// JSON.parse (RFC 8259), TextDecoder in fatal mode (WHATWG Encoding / RFC 3629), ajv (JSON Schema
// 2020-12), js-tiktoken (the cl100k_base reference port), apache-arrow and hyparquet (readers).

import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import Ajv2020Module from 'ajv/dist/2020.js';
import { getEncoding } from 'js-tiktoken';
import { tableFromIPC } from 'apache-arrow';
import { parquetMetadata, parquetReadObjects } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';

const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const demo = path.join(projectRoot, 'demo-data');
const CONTEXT = 8192;

type Kind = 'chat' | 'pairs' | 'text';
interface Broken { file: string; line?: number; row?: number; what: string; rules: string[] }
interface Manifest { files: Record<string, { lines?: number; rows?: number }>; broken: Broken[]; absent: { rule: string }[] }

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
};

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
const ROLE: Record<string, string> = { system: 'system', user: 'user', assistant: 'assistant', tool: 'tool', human: 'user', gpt: 'assistant' };

/** The chat rules as the brief defines them (common practice for role/content chat data). */
function chatRules(rec: Record<string, unknown>): string[] {
  const out = new Set<string>();
  const turns = 'messages' in rec ? rec.messages : rec.conversations;
  if (!Array.isArray(turns)) return ['chat-turns-not-list'];
  if (turns.length === 0) return ['chat-turns-empty'];
  const seq: string[] = [];
  const calls = new Set<string>();
  for (const t of turns) {
    if (!isObject(t)) { out.add('chat-turn-not-object'); continue; }
    const raw = (t.role ?? t.from) as string | undefined;
    if (raw === undefined) { out.add('chat-role-missing'); continue; }
    const role = ROLE[raw];
    if (!role) { out.add('chat-role-unknown'); continue; }
    const content = 'content' in t ? t.content : t.value;
    const toolCalls = Array.isArray(t.tool_calls) ? t.tool_calls : [];
    if ((content === null && toolCalls.length === 0) || (typeof content === 'string' && content.trim() === '')) out.add('chat-content-empty');
    if (role === 'system' && seq.some((r) => r !== 'system')) out.add('chat-system-misplaced');
    if (role !== 'system' && seq.length > 0 && seq[seq.length - 1] === role) out.add('chat-role-repeated');
    for (const c of toolCalls) calls.add((c as { id: string }).id);
    if (role === 'tool' && !calls.has(t.tool_call_id as string)) out.add('chat-tool-orphan');
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

function recordText(rec: Record<string, unknown>, kind: Kind): string {
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
  const jsonlFiles = Object.keys(manifest.files).filter((f) => f.endsWith('.jsonl'));

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
    const all = ['json-syntax', 'line-blank', 'line-too-long', 'record-not-object', 'number-unsafe', 'key-duplicate',
      'utf8-invalid', 'bom-present', 'surrogate-unpaired', 'chat-turns-not-list', 'chat-turns-empty',
      'chat-turn-not-object', 'chat-role-missing', 'chat-role-unknown', 'chat-content-empty', 'chat-system-misplaced',
      'chat-first-not-user', 'chat-role-repeated', 'chat-last-not-assistant', 'chat-tool-orphan', 'pair-side-missing',
      'pair-side-empty', 'pair-identical', 'pair-prompt-mismatch', 'schema-violation', 'tokens-over-context',
      'tokens-special-text'];
    const present = new Set(manifest.broken.flatMap((b) => b.rules));
    const absent = new Set(manifest.absent.map((a) => a.rule));
    for (const rule of all) expect(present.has(rule) || absent.has(rule), rule).toBe(true);
    for (const rule of absent) expect(present.has(rule), rule).toBe(false);
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
