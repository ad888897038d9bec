// The detail pane's mapping of a layout's reading: parts of a turn, tool calls and their answers,
// inline images (only four sniffed raster formats become thumbnails), and preference pairs.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { LTurn, Part, PairSide, Reading } from '../../../src/engine/layouts/layout';
import {
  base64Head,
  firstPromptDifference,
  mediaView,
  pairView,
  prettyArguments,
  recordMediaViews,
  sniffImage,
  THUMBNAIL_BASE64_CHARS,
  thumbnailBudget,
  turnViews,
} from '../../../src/host/detailView';
import { projectRoot, testdata } from '../helpers/build';

const keep = (s: string) => s;
const bytes = (...parts: (number[] | string)[]) =>
  Uint8Array.from(parts.flatMap((p) => (typeof p === 'string' ? [...p].map((c) => c.charCodeAt(0)) : p)));
const b64 = (b: Uint8Array) => Buffer.from(b).toString('base64');

// Signatures as the format specifications define them.
// PNG: W3C PNG Specification (Third Edition), §5.2 "PNG signature": 137 80 78 71 13 10 26 10.
const PNG_SIG = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
// JPEG: ITU-T T.81 §B.1.1.3 (SOI marker FF D8, every marker starts with FF), JFIF 1.02 (APP0 FF E0 "JFIF\0").
const JFIF_HEAD = bytes([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10], 'JFIF', [0, 1, 2, 0, 0, 1, 0, 1, 0, 0]);
// Exif-carrying JPEG: SOI then an APP1 marker (FF E1) — the JPEG rule above, CIPA DC-008 for APP1.
const EXIF_HEAD = bytes([0xff, 0xd8, 0xff, 0xe1, 0x00, 0x18], 'Exif', [0, 0]);
// GIF: GIF89a specification §17 "Header": "GIF" + version "87a" or "89a", then the logical screen descriptor.
const GIF89_HEAD = bytes('GIF89a', [1, 0, 1, 0, 0x80, 0, 0]);
const GIF87_HEAD = bytes('GIF87a', [1, 0, 1, 0, 0, 0, 0]);
// WebP: the RIFF container (Microsoft/IBM RIFF: "RIFF", 4-byte little-endian size, form type), form type "WEBP"
// (WebP Container Specification / RFC 9649 §2), then a "VP8 " chunk.
const WEBP_HEAD = bytes('RIFF', [0x1a, 0, 0, 0], 'WEBP', 'VP8 ', [0x0e, 0, 0, 0]);

describe('sniffing inline image bytes', () => {
  it('knows the four raster formats by their specified signatures', () => {
    expect(sniffImage(bytes(PNG_SIG, [0, 0, 0, 0x0d], 'IHDR'))).toBe('png');
    expect(sniffImage(JFIF_HEAD)).toBe('jpeg');
    expect(sniffImage(EXIF_HEAD)).toBe('jpeg');
    expect(sniffImage(GIF89_HEAD)).toBe('gif');
    expect(sniffImage(GIF87_HEAD)).toBe('gif');
    expect(sniffImage(WEBP_HEAD)).toBe('webp');
  });

  it('reads a real PNG file written by an encoder (the application icon shipped in the playwright-core npm package)', () => {
    const file = readFileSync(join(projectRoot, 'node_modules/playwright-core/lib/server/chromium/appIcon.png'));
    expect(sniffImage(base64Head(file.toString('base64'), 16)!)).toBe('png');
  });

  it('refuses everything else, including near misses', () => {
    const refused = [
      bytes('<svg xmlns="http://www.w3.org/2000/svg">'), // SVG can carry script: never a thumbnail
      bytes('<?xml version="1.0"?><svg>'),
      bytes('BM', [0x3a, 0, 0, 0, 0, 0, 0, 0]), // BMP
      bytes('%PDF-1.7\n'),
      bytes('RIFF', [0x24, 0, 0, 0], 'WAVEfmt '), // RIFF, but audio
      bytes('GIF8', 'xa'), // not a GIF version
      bytes(PNG_SIG.slice(0, 4)), // a PNG signature cut short
      bytes([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x00]), // one byte off (line-ending corruption the signature exists to catch)
      bytes([0xff, 0xd8]), // SOI alone
      bytes(''),
      bytes('<script>alert(1)</script>'),
    ];
    for (const b of refused) expect(sniffImage(b)).toBeNull();
  });

  it('decodes the head of base64 wrapped in lines or written in the URL-safe alphabet', () => {
    const png = bytes(PNG_SIG, [0xfb, 0xff, 0xfe, 0, 0, 0, 0x0d], 'IHDR');
    const std = b64(png);
    // RFC 2045 §6.8: MIME base64 is wrapped in lines of at most 76 characters.
    expect(base64Head(std.replace(/(.{4})/g, '$1\r\n'), 16)).toEqual(png.subarray(0, 16));
    // RFC 4648 §5: the URL-safe alphabet writes '-' and '_' for '+' and '/'.
    expect(Buffer.from(png).toString('base64url')).not.toBe(std.replace(/=+$/, ''));
    expect(base64Head(Buffer.from(png).toString('base64url'), 16)).toEqual(png.subarray(0, 16));
    expect(base64Head('not base64 at all!', 16)).toBeNull();
  });
});

const media = (over: Partial<Extract<Part, { kind: 'media' }>> = {}): Extract<Part, { kind: 'media' }> => ({
  kind: 'media',
  pointer: '/messages/0/content/1',
  media: 'image',
  location: null,
  base64: null,
  mime: null,
  ...over,
});

describe('media parts', () => {
  const tinyPng = b64(bytes(PNG_SIG, [0, 0, 0, 0x0d], 'IHDR', [0, 0, 0, 1, 0, 0, 0, 1, 8, 6, 0, 0, 0]));

  it('inline PNG, JPEG, GIF and WebP bytes become data: thumbnails of the sniffed type', () => {
    for (const [head, type] of [
      [bytes(PNG_SIG, 'rest'), 'png'],
      [JFIF_HEAD, 'jpeg'],
      [GIF89_HEAD, 'gif'],
      [WEBP_HEAD, 'webp'],
    ] as const) {
      const v = mediaView(media({ base64: b64(head) }), keep);
      expect(v).toMatchObject({ kind: 'media', inline: true, src: `data:image/${type};base64,${b64(head)}` });
    }
  });

  it('trusts the bytes, not the declared type', () => {
    expect(mediaView(media({ base64: tinyPng, mime: 'image/svg+xml' }), keep)).toMatchObject({ src: `data:image/png;base64,${tinyPng}` });
    const svg = mediaView(media({ base64: b64(bytes('<svg onload="x()"/>')), mime: 'image/png' }), keep);
    expect(svg.kind === 'media' && svg.src).toBe(undefined);
    expect(svg).toMatchObject({ inline: true, chip: 'image (image/png), 19 B, not shown' });
  });

  it('shows nothing over the cap, and says how large the bytes are', () => {
    // Buffer's base64 encoder (Node) as the reference for the payload; 1.2 MiB of PNG-headed bytes.
    const big = Buffer.alloc(Math.round(1.2 * 1024 * 1024));
    Buffer.from(PNG_SIG).copy(big);
    const v = mediaView(media({ base64: big.toString('base64') }), keep);
    expect(v).toEqual({ kind: 'media', media: 'image', pointer: '/messages/0/content/1', inline: true, chip: 'image, 1.2 MiB, not shown' });
    // At the cap it is shown, one character of padding past it is not.
    const atCap = 'A'.repeat(THUMBNAIL_BASE64_CHARS);
    const edge = b64(bytes(PNG_SIG, 'x')); // 9 bytes: 12 characters, no padding
    const shown = edge + atCap.slice(edge.length);
    expect(shown.length).toBe(THUMBNAIL_BASE64_CHARS);
    expect(mediaView(media({ base64: shown }), keep)).toHaveProperty('src');
    expect(mediaView(media({ base64: shown + 'AAAA' }), keep)).not.toHaveProperty('src');
  });

  it('spends one allowance across the images of a record', () => {
    const budget = thumbnailBudget();
    const payload = b64(bytes(PNG_SIG, 'x')) + 'A'.repeat(THUMBNAIL_BASE64_CHARS - 12);
    const views = Array.from({ length: 12 }, () => mediaView(media({ base64: payload }), keep, budget));
    const shown = views.filter((v) => v.kind === 'media' && v.src !== undefined).length;
    expect(shown).toBe(Math.floor((2 * 1024 * 1024) / payload.length));
    expect(views.at(-1)).toMatchObject({ chip: expect.stringMatching(/not shown/) });
  });

  it('invalid base64 and unknown bytes are chips', () => {
    expect(mediaView(media({ base64: 'iVBOR w0K*&^' }), keep)).toMatchObject({ chip: 'image, not valid base64, not shown' });
    expect(mediaView(media({ media: 'audio', base64: b64(bytes('ID3', [4, 0, 0, 0, 0, 0, 0])) }), keep)).toMatchObject({
      media: 'audio',
      inline: true,
      chip: 'audio, 10 B, not shown',
    });
  });

  it('a path or a URL is a chip with the location, never a source to load', () => {
    for (const location of ['https://example.org/cassette.png', 'javascript:alert(1)', 'images/brake-pads/0042.jpg', 'file:///etc/passwd', 'data:image/svg+xml,<svg/>']) {
      const v = mediaView(media({ location }), keep);
      expect(v).toEqual({ kind: 'media', media: 'image', pointer: '/messages/0/content/1', inline: false, chip: location });
    }
    expect(mediaView(media({ location: 'x'.repeat(5000) }), keep)).toMatchObject({ chip: `${'x'.repeat(500)}…` });
    expect(mediaView(media({ media: 'video' }), keep)).toMatchObject({ inline: false, chip: 'video, no location' });
  });
});

describe('tool-call arguments', () => {
  it('re-indent as JSON.stringify(JSON.parse(s), null, 2) does, on every must-parse file of JSONTestSuite', () => {
    // nst/JSONTestSuite test_parsing/y_*.json (../shared/testdata/json-parsing, see SOURCES.md); JSON.parse and
    // JSON.stringify (ECMA-262 §25.5) are the reference.
    const dir = join(testdata, 'json-parsing');
    const files = readdirSync(dir).filter((f) => f.startsWith('y_'));
    expect(files.length).toBeGreaterThan(90);
    for (const f of files) {
      const text = readFileSync(join(dir, f), 'utf8');
      const value = JSON.parse(text);
      // As written: the same value comes back.
      expect(JSON.parse(prettyArguments(text)), f).toEqual(value);
      // Written canonically (no escapes to keep, numbers as JSON.stringify writes them): the same text.
      const canonical = JSON.stringify(value);
      expect(prettyArguments(canonical), f).toBe(JSON.stringify(value, null, 2));
    }
  });

  it('keep numbers and escapes as written', () => {
    expect(prettyArguments('{"order":12345678901234567890,"note":"caf\\u00e9"}')).toBe('{\n  "order": 12345678901234567890,\n  "note": "caf\\u00e9"\n}');
    expect(prettyArguments('{ "a" : [ ] , "b" : { } }')).toBe('{\n  "a": [],\n  "b": {}\n}');
  });

  it('show invalid JSON and plain text as written, object values stringified', () => {
    expect(prettyArguments('{"city": "Ghent",')).toBe('{"city": "Ghent",');
    expect(prettyArguments('city=Ghent')).toBe('city=Ghent');
    expect(prettyArguments({ city: 'Ghent', days: [1, 2] })).toBe(JSON.stringify({ city: 'Ghent', days: [1, 2] }, null, 2));
    expect(prettyArguments(undefined)).toBe('');
    expect(prettyArguments('{"q":"<script>alert(1)</script>"}')).toBe('{\n  "q": "<script>alert(1)</script>"\n}');
  });
});

function turn(index: number, over: Partial<LTurn> & { listPointer?: string } = {}): LTurn {
  const base = over.listPointer ?? '/messages';
  const pointer = `${base}/${index}`;
  const text = over.text ?? '';
  return {
    index,
    pointer,
    role: null,
    rawRole: over.role ?? undefined,
    rolePointer: `${pointer}/role`,
    text,
    contentPointer: `${pointer}/content`,
    contentPresent: true,
    rawContent: text,
    parts: text ? [{ kind: 'text', pointer: `${pointer}/content`, text }] : [],
    toolCallIds: [],
    toolCallId: null,
    hasToolCalls: false,
    isObject: true,
    trainable: null,
    ...over,
  };
}

function reading(over: Partial<Reading>): Reading {
  return { layout: 'turns', pieces: [], sequences: [], turnLists: [], issues: [], ...over };
}

// A tool-calling chat as the OpenAI chat format writes it (common practice): the assistant's
// `tool_calls` entry carries an id; the tool turn names it in `tool_call_id`.
function toolChat(): LTurn[] {
  return [
    turn(0, { role: 'user', text: 'Is it dry enough to ride to the co-op in Ghent?' }),
    turn(1, {
      role: 'assistant',
      text: '',
      hasToolCalls: true,
      toolCallIds: ['call_1'],
      parts: [
        { kind: 'reasoning', pointer: '/messages/1/reasoning_content', text: 'Need the forecast first.' },
        {
          kind: 'tool-call',
          pointer: '/messages/1/tool_calls/0',
          id: 'call_1',
          name: 'get_weather',
          namePointer: '/messages/1/tool_calls/0/function/name',
          arguments: '{"city":"Ghent","units":"metric"}',
          argumentsPointer: '/messages/1/tool_calls/0/function/arguments',
        },
      ],
    }),
    turn(2, { role: 'tool', text: '{"rain_mm":0}', toolCallId: 'call_1' }),
    turn(3, { role: 'tool', text: 'late', toolCallId: 'call_9' }),
    turn(4, { role: 'assistant', text: 'Dry all day: ride.', trainable: false }),
  ];
}

describe('turns of a conversation', () => {
  it('carry parts, the call a tool turn answers, the loss flag and per-turn tokens', () => {
    const turns = toolChat();
    const counts = new Map([
      ['/messages/0', 12],
      ['/messages/1', 30],
      ['/messages/4', 6],
    ]);
    const views = turnViews(reading({ turnLists: [{ name: 'messages', pointer: '/messages', raw: [], turns, role: 'example' }] }), counts, keep);
    expect(views.map((v) => v.tokens)).toEqual([12, 30, null, null, 6]);
    expect(views[0]).toEqual({ index: 0, role: 'user', content: turns[0].text, tokens: 12, pointer: '/messages/0' });
    expect(views[1].parts).toEqual([
      { kind: 'reasoning', text: 'Need the forecast first.', pointer: '/messages/1/reasoning_content' },
      { kind: 'tool-call', name: 'get_weather', id: 'call_1', arguments: '{\n  "city": "Ghent",\n  "units": "metric"\n}', pointer: '/messages/1/tool_calls/0' },
    ]);
    expect(views[2].answers).toEqual({ id: 'call_1', name: 'get_weather' });
    expect(views[3].answers).toEqual({ id: 'call_9', name: null });
    expect(views[4].trainable).toBe(false);
    expect(views[0]).not.toHaveProperty('trainable');
    expect(views[0]).not.toHaveProperty('answers');
  });

  it('cut every text they carry', () => {
    const turns = toolChat();
    const cut = (s: string) => (s.length > 8 ? `${s.slice(0, 8)}…` : s);
    const [, call] = turnViews(reading({ turnLists: [{ name: 'messages', pointer: '/messages', raw: [], turns, role: 'example' }] }), new Map(), cut);
    expect(call.parts?.[1]).toMatchObject({ kind: 'tool-call', arguments: '{\n  "cit…' });
  });

  it('list each turn once, in order, and leave a pair’s sides to the pair', () => {
    const messages = [turn(0, { role: 'user', text: 'a' }), turn(1, { role: 'assistant', text: 'b' })];
    const r = reading({
      turnLists: [
        { name: 'messages', pointer: '/messages', raw: [], turns: messages, role: 'example' },
        { name: 'prompt', pointer: '/messages', raw: [], turns: messages.slice(0, 1), role: 'prompt' },
      ],
    });
    expect(turnViews(r, new Map(), keep).map((v) => v.pointer)).toEqual(['/messages/0', '/messages/1']);
    const chosen = [turn(0, { role: 'assistant', text: 'x', listPointer: '/chosen' })];
    const p = reading({
      turnLists: [{ name: 'chosen', pointer: '/chosen', raw: [], turns: chosen, role: 'answer' }],
      pair: pairOf(textSide('prompt', 'q'), turnSide('chosen', chosen), textSide('rejected', 'y')),
    });
    expect(turnViews(p, new Map(), keep)).toEqual([]);
  });

  it('record-level media map like parts', () => {
    const r = reading({ media: [{ kind: 'image', pointer: '/images/0', location: 'frames/0001.png', base64: null, mime: null }] });
    expect(recordMediaViews(r, keep)).toEqual([{ kind: 'media', media: 'image', pointer: '/images/0', inline: false, chip: 'frames/0001.png' }]);
  });
});

function textSide(name: PairSide['name'], text: string): PairSide {
  return { name, pointer: `/${name}`, present: true, raw: text, text, turns: null, transcript: false };
}
function turnSide(name: PairSide['name'], turns: LTurn[], transcript = false): PairSide {
  return { name, pointer: `/${name}`, present: true, raw: [], text: null, turns, transcript };
}
function absent(name: PairSide['name']): PairSide {
  return { name, pointer: `/${name}`, present: false, raw: undefined, text: null, turns: null, transcript: false };
}
function pairOf(prompt: PairSide, chosen: PairSide, rejected: PairSide) {
  return { prompt, chosen, rejected };
}

describe('preference pairs', () => {
  it('text sides keep their text and sum the tokens under their pointer', () => {
    const r = reading({ layout: 'preference', pair: pairOf(textSide('prompt', 'Why does my chain skip?'), textSide('chosen', 'Worn cassette.'), textSide('rejected', 'Buy a new bike.')) });
    const counts = new Map([
      ['/prompt', 7],
      ['/chosen', 4],
      ['/rejected', 5],
    ]);
    const v = pairView(r, counts, keep)!;
    expect(v.prompt).toEqual({ name: 'prompt', pointer: '/prompt', present: true, text: 'Why does my chain skip?', turns: null, transcript: false, tokens: 7 });
    expect([v.chosen.tokens, v.rejected.tokens]).toEqual([4, 5]);
    expect(v.promptDiffers).toBeNull();
    expect(pairView(reading({}), counts, keep)).toBeNull();
  });

  it('turn sides sum their turns, and an absent side has no count', () => {
    const side = (name: 'chosen' | 'rejected', answer: string) => [
      turn(0, { role: 'user', text: 'My brakes squeal.', listPointer: `/${name}` }),
      turn(1, { role: 'assistant', text: answer, listPointer: `/${name}` }),
    ];
    const r = reading({ pair: pairOf(absent('prompt'), turnSide('chosen', side('chosen', 'Clean the rims.')), turnSide('rejected', side('rejected', 'Ignore it.'))) });
    const counts = new Map([
      ['/chosen/0', 5],
      ['/chosen/1', 4],
      ['/rejected/0', 5],
      ['/rejected/1', 3],
      ['/chosenness', 99], // a sibling key sharing the prefix must not count
    ]);
    const v = pairView(r, counts, keep)!;
    expect([v.prompt.tokens, v.chosen.tokens, v.rejected.tokens]).toEqual([null, 9, 8]);
    expect(v.chosen.turns?.map((t) => [t.role, t.content, t.tokens])).toEqual([
      ['user', 'My brakes squeal.', 5],
      ['assistant', 'Clean the rims.', 4],
    ]);
    // Same prompt, different answers: nothing to mark.
    expect(v.promptDiffers).toBeNull();
  });

  it('mark the first prompt turn where chosen and rejected differ', () => {
    const conv = (name: string, turns: [string, string][]) => turns.map(([role, text], i) => turn(i, { role, text, listPointer: `/${name}` }));
    const chosen = conv('chosen', [
      ['user', 'Hi'],
      ['assistant', 'Hello'],
      ['user', 'Tube or tubeless?'],
      ['assistant', 'Tubeless for gravel.'],
    ]);
    const rejected = conv('rejected', [
      ['user', 'Hi'],
      ['assistant', 'Hello'],
      ['user', 'Tube or tubeless for road?'],
      ['assistant', 'Tubes.'],
    ]);
    expect(firstPromptDifference(chosen, rejected)).toBe(2);
    // A transcript whose prompt holds a turn more.
    const longer = conv('rejected', [
      ['user', 'Hi'],
      ['assistant', 'Hello'],
      ['user', 'Tube or tubeless?'],
      ['assistant', 'Which bike?'],
      ['user', 'Gravel.'],
      ['assistant', 'Tubeless.'],
    ]);
    expect(firstPromptDifference(chosen, longer)).toBe(3);
    expect(firstPromptDifference(chosen, conv('rejected', [...chosen.slice(0, 3).map((t): [string, string] => [t.role!, t.text]), ['assistant', 'Other.']]))).toBeNull();
    expect(firstPromptDifference(chosen, null)).toBeNull();
    const r = reading({ pair: pairOf(absent('prompt'), turnSide('chosen', chosen, true), turnSide('rejected', rejected, true)) });
    const v = pairView(r, new Map(), keep)!;
    expect(v.promptDiffers).toBe(2);
    expect(v.chosen.transcript).toBe(true);
  });

  it('a transcript’s turns share its string’s pointer: its count is the side’s, not each turn’s', () => {
    const transcript = ['hi', 'hello', 'q', 'a'].map((text, i) => ({ ...turn(i, { role: i % 2 ? 'assistant' : 'user', text }), pointer: '/chosen' }));
    const r = reading({ pair: pairOf(absent('prompt'), turnSide('chosen', transcript, true), textSide('rejected', 'b')) });
    const v = pairView(r, new Map([['/chosen', 11], ['/rejected', 1]]), keep)!;
    expect(v.chosen.tokens).toBe(11);
    expect(v.chosen.turns?.map((t) => t.tokens)).toEqual([null, null, null, null]);
  });

  it('a tool answer on a side finds its call in the shared prompt', () => {
    const prompt = toolChat().slice(0, 2).map((t) => ({ ...t, pointer: t.pointer.replace('/messages', '/prompt') }));
    const chosen = [turn(0, { role: 'tool', text: '{"rain_mm":0}', toolCallId: 'call_1', listPointer: '/chosen' })];
    const r = reading({ pair: pairOf(turnSide('prompt', prompt), turnSide('chosen', chosen), turnSide('rejected', [])) });
    const v = pairView(r, new Map(), keep)!;
    expect(v.chosen.turns?.[0].answers).toEqual({ id: 'call_1', name: 'get_weather' });
    expect(v.rejected.turns).toEqual([]);
  });
});
