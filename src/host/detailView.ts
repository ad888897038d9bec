// Maps what a layout reads out of a record into the detail pane's turns, parts and pair sides.
// Pure: no 'vscode'. Everything it returns is record text, cut and stringified; the webview shows
// it as text. Inline image bytes become a thumbnail only when their first bytes are one of four
// raster formats a browser decodes without running anything, and only when small.

import type { LTurn, Part, PairSide, Reading } from '../engine/layouts/layout.js';
import type { RenderedRecord } from '../engine/tokens/recordTokens.js';
import type { PairSideView, PairView, PartView, RenderedView, TurnView } from '../protocol.js';

/** Largest base64 payload (characters) sent as a thumbnail. */
export const THUMBNAIL_BASE64_CHARS = 256 * 1024;
/** Base64 characters of thumbnails one detail may carry in all, so a record of many images stays light. */
export const THUMBNAIL_TOTAL_CHARS = 2 * 1024 * 1024;
/** Tool-call arguments longer than this are shown as written, not parsed. */
export const ARGUMENTS_PARSE_CHARS = 1_000_000;
/** Longest location shown on a media chip. */
const LOCATION_CHARS = 500;

export type ImageType = 'png' | 'jpeg' | 'gif' | 'webp';

/** What is left of the thumbnail allowance of one detail. */
export interface ThumbnailBudget {
  chars: number;
}

export function thumbnailBudget(): ThumbnailBudget {
  return { chars: THUMBNAIL_TOTAL_CHARS };
}

/** The raster format the bytes start with, or null. */
export function sniffImage(b: Uint8Array): ImageType | null {
  // PNG (W3C PNG Specification, §5.2 PNG signature): 89 50 4E 47 0D 0A 1A 0A.
  if (b.length >= 8 && b[0] === 0x89 && b[1] === 0x50 && b[2] === 0x4e && b[3] === 0x47 && b[4] === 0x0d && b[5] === 0x0a && b[6] === 0x1a && b[7] === 0x0a) return 'png';
  // JPEG (ITU-T T.81 / JFIF): the SOI marker FF D8 followed by the next marker's FF.
  if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return 'jpeg';
  // GIF (GIF89a specification, Header block): "GIF87a" or "GIF89a".
  if (b.length >= 6 && ascii(b, 0, 4) === 'GIF8' && (b[4] === 0x37 || b[4] === 0x39) && b[5] === 0x61) return 'gif';
  // WebP (RIFF container): "RIFF", a 4-byte size, then the form type "WEBP".
  if (b.length >= 12 && ascii(b, 0, 4) === 'RIFF' && ascii(b, 8, 4) === 'WEBP') return 'webp';
  return null;
}

function ascii(b: Uint8Array, at: number, n: number): string {
  return String.fromCharCode(...b.subarray(at, at + n));
}

const BASE64 = /^[A-Za-z0-9+/]*={0,2}$/;

/** Standard base64 of a payload as records hold it: line breaks dropped, the URL-safe alphabet mapped back. */
export function cleanBase64(s: string): string | null {
  const clean = s.replace(/\s+/g, '').replace(/-/g, '+').replace(/_/g, '/');
  if (!BASE64.test(clean) || clean.length % 4 === 1) return null;
  return clean;
}

/** The first bytes of a base64 payload (no more than `n`), or null when they do not decode. */
export function base64Head(s: string, n: number): Uint8Array | null {
  const want = Math.ceil(n / 3) * 4;
  // A little more than needed, so line breaks inside the head do not shorten it.
  const head = s.slice(0, want * 2 + 8).replace(/\s+/g, '').replace(/-/g, '+').replace(/_/g, '/').slice(0, want).replace(/=+$/, '');
  const rest = head.length % 4;
  const take = rest === 0 ? head : rest === 1 ? head.slice(0, -1) : head + '='.repeat(4 - rest);
  if (!/^[A-Za-z0-9+/]*={0,2}$/.test(take)) return null;
  const bin = atob(take);
  const out = new Uint8Array(Math.min(n, bin.length));
  for (let i = 0; i < out.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

/** Bytes a base64 payload of `chars` characters decodes to (padding ignored: an estimate within 2). */
function decodedSize(chars: number): number {
  return Math.floor((chars * 3) / 4);
}

export function formatSize(n: number): string {
  const units = ['B', 'KiB', 'MiB', 'GiB'];
  let v = n;
  let u = 0;
  while (v >= 1024 && u < units.length - 1) {
    v /= 1024;
    u++;
  }
  return u === 0 ? `${v} B` : `${v.toFixed(1)} ${units[u]}`;
}

interface MediaLike {
  pointer: string;
  media: 'image' | 'audio' | 'video' | 'file';
  location: string | null;
  base64: string | null;
  mime: string | null;
}

/** A media part: a thumbnail for a small inline raster image, else a chip naming where it is or why it is not shown. */
export function mediaView(p: MediaLike, cut: (s: string) => string, budget: ThumbnailBudget = thumbnailBudget()): PartView {
  const base = { kind: 'media' as const, media: p.media, pointer: p.pointer };
  const declared = typeof p.mime === 'string' && p.mime !== '' ? ` (${p.mime.slice(0, 80)})` : '';
  if (typeof p.base64 === 'string') {
    const raw = p.base64;
    if (raw.length > THUMBNAIL_BASE64_CHARS) {
      return { ...base, inline: true, chip: `${p.media}${declared}, ${formatSize(decodedSize(raw.length))}, not shown` };
    }
    const clean = cleanBase64(raw);
    if (clean === null) return { ...base, inline: true, chip: `${p.media}${declared}, not valid base64, not shown` };
    const size = formatSize(decodedSize(clean.replace(/=+$/, '').length));
    const head = base64Head(clean, 16);
    const type = head ? sniffImage(head) : null;
    if (type === null) return { ...base, inline: true, chip: `${p.media}${declared}, ${size}, not shown` };
    if (clean.length > budget.chars) return { ...base, inline: true, chip: `image/${type}, ${size}, not shown (this record's thumbnails are spent)` };
    budget.chars -= clean.length;
    return { ...base, inline: true, chip: `image/${type}, ${size}`, src: `data:image/${type};base64,${clean}` };
  }
  if (typeof p.location === 'string' && p.location !== '') {
    return { ...base, inline: false, chip: p.location.length > LOCATION_CHARS ? `${p.location.slice(0, LOCATION_CHARS)}…` : p.location };
  }
  return { ...base, inline: false, chip: `${p.media}${declared}, no location` };
}

/**
 * Tool-call arguments for people: a JSON string re-indented with two spaces (as
 * `JSON.stringify(JSON.parse(s), null, 2)` would, but keeping numbers and escapes as written, so a
 * 20-digit id is not rounded); an object value stringified; anything else as written.
 */
export function prettyArguments(args: unknown): string {
  if (typeof args === 'string') {
    if (args.length > ARGUMENTS_PARSE_CHARS) return args;
    try {
      JSON.parse(args);
    } catch {
      return args;
    }
    return reindentJson(args);
  }
  if (args === undefined) return '';
  try {
    return JSON.stringify(args, null, 2) ?? String(args);
  } catch {
    return String(args);
  }
}

/** Re-indents valid JSON text token by token (RFC 8259 whitespace between tokens is dropped, tokens kept). */
function reindentJson(text: string): string {
  const out: string[] = [];
  let depth = 0;
  const newline = () => out.push('\n', '  '.repeat(depth));
  const n = text.length;
  let i = 0;
  while (i < n) {
    const c = text[i];
    if (c === '"') {
      let j = i + 1;
      while (j < n && text[j] !== '"') j += text[j] === '\\' ? 2 : 1;
      out.push(text.slice(i, j + 1));
      i = j + 1;
      continue;
    }
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r') {
      i++;
      continue;
    }
    if (c === '{' || c === '[') {
      let j = i + 1;
      while (j < n && /[ \t\n\r]/.test(text[j])) j++;
      if (text[j] === (c === '{' ? '}' : ']')) {
        out.push(c === '{' ? '{}' : '[]');
        i = j + 1;
        continue;
      }
      out.push(c);
      depth++;
      newline();
    } else if (c === '}' || c === ']') {
      depth--;
      newline();
      out.push(c);
    } else if (c === ',') {
      out.push(',');
      newline();
    } else if (c === ':') out.push(': ');
    else out.push(c);
    i++;
  }
  return out.join('');
}

export function partViews(parts: readonly Part[], cut: (s: string) => string, budget: ThumbnailBudget = thumbnailBudget()): PartView[] {
  return parts.map((p): PartView => {
    switch (p.kind) {
      case 'text':
      case 'reasoning':
        return { kind: p.kind, text: cut(p.text), pointer: p.pointer };
      case 'tool-call':
        return {
          kind: 'tool-call',
          name: cut(p.name),
          arguments: cut(prettyArguments(p.arguments)),
          id: p.id === null ? null : cut(p.id),
          pointer: p.pointer,
        };
      case 'media':
        return mediaView(p, cut, budget);
      default:
        return { kind: 'unknown', type: cut(String((p as { type?: unknown }).type ?? '')), pointer: p.pointer };
    }
  });
}

function roleOf(t: LTurn): string {
  return t.role ?? (typeof t.rawRole === 'string' ? t.rawRole : '(no role)');
}

/** The function name of the latest call with this id among `turns` (searched from the end). */
function callName(turns: readonly LTurn[], id: string): string | null {
  for (let i = turns.length - 1; i >= 0; i--) {
    for (const p of turns[i].parts) if (p.kind === 'tool-call' && p.id === id) return p.name;
  }
  return null;
}

/** Views of `turns`; `earlier` are the turns before them (a pair's prompt), where the calls a tool turn answers may be. */
function viewTurns(
  turns: readonly LTurn[],
  counts: ReadonlyMap<string, number>,
  cut: (s: string) => string,
  earlier: readonly LTurn[],
  budget: ThumbnailBudget,
): TurnView[] {
  const seen: LTurn[] = [...earlier];
  // Turns parsed out of one transcript string share its pointer: a count there belongs to the whole string.
  const shared = new Set<string>();
  const pointers = new Set<string>();
  for (const t of turns) (pointers.has(t.pointer) ? shared : pointers).add(t.pointer);
  return turns.map((t, i): TurnView => {
    const tokens = shared.has(t.pointer) ? null : (counts.get(t.pointer) ?? null);
    const v: TurnView = { index: i, role: roleOf(t), content: cut(t.text), tokens, pointer: t.pointer };
    const plain = t.parts.length === 0 || (t.parts.length === 1 && t.parts[0].kind === 'text');
    if (!plain) v.parts = partViews(t.parts, cut, budget);
    if (t.toolCallId !== null) v.answers = { id: cut(t.toolCallId), name: callName(seen, t.toolCallId) };
    if (t.trainable !== null) v.trainable = t.trainable;
    seen.push(t);
    return v;
  });
}

function under(pointer: string, base: string): boolean {
  return base !== '' && (pointer === base || pointer.startsWith(`${base}/`));
}

/**
 * The conversation of a record: the turns of its turn lists in order, each turn once. A pair's
 * sides are left to `pairView`.
 */
export function turnViews(
  reading: Reading,
  counts: ReadonlyMap<string, number>,
  cut: (s: string) => string,
  budget: ThumbnailBudget = thumbnailBudget(),
): TurnView[] {
  const sides = reading.pair ? [reading.pair.prompt, reading.pair.chosen, reading.pair.rejected].map((s) => s.pointer) : [];
  const onSide = (p: string) => sides.some((s) => under(p, s));
  const seen = new Set<string>();
  const turns: LTurn[] = [];
  for (const list of reading.turnLists) {
    if (onSide(list.pointer) || (list.turns.length && list.turns.every((t) => onSide(t.pointer)))) continue;
    for (const t of list.turns) {
      if (seen.has(t.pointer)) continue;
      seen.add(t.pointer);
      turns.push(t);
    }
  }
  return viewTurns(turns, counts, cut, [], budget);
}

/** Tokens of everything under a pointer, from the per-turn and per-text counts; null when none is known. */
function tokensUnder(counts: ReadonlyMap<string, number>, base: string): number | null {
  let n: number | null = null;
  for (const [p, c] of counts) if (under(p, base)) n = (n ?? 0) + c;
  return n;
}

/** How many leading turns of a side are its prompt: through the last user turn, else the turns before the first assistant turn. */
function promptLength(turns: readonly LTurn[]): number {
  for (let i = turns.length - 1; i >= 0; i--) if (turns[i].role === 'user') return i + 1;
  const first = turns.findIndex((t) => t.role === 'assistant');
  return first < 0 ? 0 : first;
}

function turnKey(t: LTurn): string {
  const calls = t.parts
    .filter((p) => p.kind !== 'text')
    .map((p) => (p.kind === 'tool-call' ? [p.kind, p.id, p.name, p.arguments] : p.kind === 'media' ? [p.kind, p.location, p.base64] : [p.kind, 'text' in p ? p.text : '']));
  return JSON.stringify([t.role, t.text, t.toolCallId, calls]);
}

/** The first prompt turn where the chosen and rejected sides differ, or null. */
export function firstPromptDifference(chosen: readonly LTurn[] | null, rejected: readonly LTurn[] | null): number | null {
  if (!chosen || !rejected) return null;
  const a = promptLength(chosen);
  const b = promptLength(rejected);
  for (let i = 0; i < Math.max(a, b); i++) {
    if (i >= a || i >= b || turnKey(chosen[i]) !== turnKey(rejected[i])) return i;
  }
  return null;
}

/** The preference pair of a record, or null when the reading has none. */
export function pairView(
  reading: Reading,
  counts: ReadonlyMap<string, number>,
  cut: (s: string) => string,
  budget: ThumbnailBudget = thumbnailBudget(),
): PairView | null {
  const pair = reading.pair;
  if (!pair) return null;
  const prompt = pair.prompt.turns ?? [];
  const side = (s: PairSide, earlier: readonly LTurn[]): PairSideView => ({
    name: s.name,
    pointer: s.pointer,
    present: s.present,
    text: s.text === null ? null : cut(s.text),
    turns: s.turns === null ? null : viewTurns(s.turns, counts, cut, earlier, budget),
    transcript: s.transcript,
    tokens: s.present ? tokensUnder(counts, s.pointer) : null,
  });
  return {
    prompt: side(pair.prompt, []),
    chosen: side(pair.chosen, prompt),
    rejected: side(pair.rejected, prompt),
    promptDiffers: firstPromptDifference(pair.chosen.turns, pair.rejected.turns),
  };
}

/** Media the record lists beside its turns (an `images` column …). */
export function recordMediaViews(reading: Reading, cut: (s: string) => string, budget: ThumbnailBudget = thumbnailBudget()): PartView[] {
  return (reading.media ?? []).map((m) => mediaView({ pointer: m.pointer, media: m.kind, location: m.location, base64: m.base64, mime: m.mime }, cut, budget));
}

/** A record's sequences rendered with the chat template, cut to `max` characters each, spans clipped to the cut. */
export function renderedViews(r: RenderedRecord, max: number): RenderedView[] {
  return r.sequences.map((s) => {
    const cutAt = s.text.length > max ? max : s.text.length;
    return {
      name: s.name,
      text: s.text.slice(0, cutAt),
      cut: cutAt < s.text.length,
      spans: s.spans.filter((sp) => sp.start < cutAt).map((sp) => ({ start: sp.start, end: Math.min(sp.end, cutAt) })),
      rendered: s.rendered,
      content: s.content,
      trainable: s.trainable,
      error: s.error,
    };
  });
}
