// The benchmark's inputs, generated: a Zipf-like vocabulary of about 60,000 generated words mixed
// with Unicode white space (U+0085, U+00A0, U+3000 …), emoji, CJK, code and JSON; chat records of
// the bicycle-repair co-op's support assistant (a system prompt, user/assistant turns, tool calls);
// short plain-text records. Large files are assembled from pools of pre-serialised pieces into big
// buffers (record ids differ on every line, turns are combined at random), never one
// JSON.stringify per line.
import { closeSync, openSync, writeSync } from 'node:fs';

/** A small seeded generator (mulberry32), so every run builds the same inputs. */
export function prng(seed) {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const ONSETS = ['', 'b', 'br', 'c', 'ch', 'cl', 'd', 'dr', 'f', 'fl', 'g', 'gr', 'h', 'j', 'k', 'l', 'm', 'n', 'p', 'pl', 'pr', 'qu', 'r', 's', 'sh', 'sk', 'sp', 'st', 't', 'th', 'tr', 'v', 'w', 'y', 'z'];
const NUCLEI = ['a', 'e', 'i', 'o', 'u', 'ai', 'ea', 'ee', 'ie', 'oa', 'oo', 'ou', 'y'];
const CODAS = ['', '', 'b', 'ck', 'd', 'ft', 'g', 'l', 'll', 'm', 'n', 'nd', 'ng', 'nt', 'p', 'r', 'rd', 'rt', 's', 'sh', 'ss', 'st', 't', 'x'];
const SUFFIXES = ['', '', '', 's', 'ed', 'ing', 'er', 'ly', 'ness', 'tion', 'able', "'s"];
// Words of the trade, given high ranks so the text reads like the co-op's support desk.
const TRADE = (
  'the a to and of is it you your we for on with that this chain brake wheel tyre tire spoke hub cassette derailleur hanger cable ' +
  'housing pad rotor caliper lever bottom bracket crank pedal saddle seatpost stem headset fork shock tubeless sealant valve rim ' +
  'truing tension torque bolt thread grease lube degreaser shifter indexing cog chainring freewheel bearing axle quick release thru ' +
  'co-op member workshop appointment repair booking refund warranty part order stock bike frame carbon steel aluminium e-bike battery'
).split(' ');

/** About `size` distinct generated words, ranked; the trade's words come first. */
export function vocabulary(size = 60_000, seed = 1) {
  const rand = prng(seed);
  const pick = (xs) => xs[Math.floor(rand() * xs.length)];
  const seen = new Set(TRADE);
  const words = [...TRADE];
  while (words.length < size) {
    const syllables = 1 + Math.floor(rand() * 3.2);
    let w = '';
    for (let i = 0; i < syllables; i++) w += pick(ONSETS) + pick(NUCLEI) + (i === syllables - 1 ? pick(CODAS) : '');
    w += pick(SUFFIXES);
    if (rand() < 0.04) w = w[0].toUpperCase() + w.slice(1);
    if (rand() < 0.01) w = w.toUpperCase();
    if (!seen.has(w)) {
      seen.add(w);
      words.push(w);
    }
  }
  return words;
}

/** Draws ranks with probability ∝ 1/(rank + 2.7) (a Zipf–Mandelbrot law, common practice for word frequencies). */
function zipfSampler(n, rand) {
  const cdf = new Float64Array(n);
  let sum = 0;
  for (let r = 0; r < n; r++) cdf[r] = sum += 1 / (r + 2.7);
  for (let r = 0; r < n; r++) cdf[r] /= sum;
  return () => {
    const u = rand();
    let lo = 0;
    let hi = n - 1;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (cdf[mid] < u) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
}

const EMOJI = ['🚲', '🔧', '👍🏽', '👩‍🔧', '🛠️', '✅', '⚠️', '🙂', '🚵‍♀️', '🇳🇱', '⛓️', '🔩'];
const WHITE = ['\u00a0', '\u0085', '\u3000', '\u2003', '\u2009', '\t', '\n', '\n\n', '  ', '\u202f', '\u2028'];
const PUNCT = ['.', ',', '!', '?', ';', ':', ' -', ' —', '…', ')', '"'];
const CODE = [
  'function tension(cable) {\n  return cable.pull * 0.5;\n}\n',
  'const gears = [11, 13, 15, 17, 19, 21, 24, 28];\n',
  '    if (spoke.load > limit) { retrue(wheel); }\n',
  'def torque_ok(nm: float) -> bool:\n    return 4.0 <= nm <= 6.0\n',
  'SELECT sku, qty FROM stock WHERE part = \'hanger\' AND qty > 0;\n',
  '```bash\nbike-fit --height 178 --inseam 82\n```\n',
];
const JSONS = ['{"torque_nm": 5.5, "bolts": [1, 2, 3]}', '{"sku":"HGR-104","in_stock":true,"price_eur":18.9}', '[{"gear":1,"teeth":34},{"gear":2,"teeth":28}]', '{"ticket": 48213, "status": "open", "notes": null}'];

/** A text generator over the vocabulary: `text(bytes)` returns a string of about that many UTF-8 bytes. */
export function textMaker(seed = 2, words = vocabulary()) {
  const rand = prng(seed);
  const rank = zipfSampler(words.length, rand);
  const pick = (xs) => xs[Math.floor(rand() * xs.length)];
  const cjk = () => {
    let s = '';
    const n = 2 + Math.floor(rand() * 12);
    for (let i = 0; i < n; i++) s += String.fromCharCode(0x4e00 + Math.floor(rand() * 0x5000));
    return s;
  };
  const piece = () => {
    const k = rand();
    if (k < 0.9) return words[rank()];
    if (k < 0.93) return String(Math.floor(rand() * 10 ** (1 + Math.floor(rand() * 6))));
    if (k < 0.95) return cjk();
    if (k < 0.965) return pick(EMOJI);
    if (k < 0.975) return pick(JSONS);
    if (k < 0.98) return pick(CODE);
    if (k < 0.982) return pick(['Ça coûte 12 €', 'größer', 'naïve', 'Łódź', 'señal', 'Ελλάδα', 'привод', 'ﾊﾝﾄﾞﾙ']);
    return pick(words) + pick(PUNCT);
  };
  return (bytes) => {
    let s = '';
    let words = 0;
    while (Buffer.byteLength(s) < bytes) {
      s += piece();
      words++;
      const w = rand();
      if (w < 0.06) s += pick(PUNCT) + ' ';
      else if (w < 0.09) s += pick(WHITE);
      else s += ' ';
      if (words % 17 === 0 && rand() < 0.5) s += '. ';
    }
    return s.trimEnd();
  };
}

export const SYSTEM_PROMPT =
  'You are the support assistant of the Spoke & Sprocket bicycle-repair co-op. Members ask about repairs, bookings, parts and ' +
  'their own bikes. Answer briefly and kindly, name the tool a member needs, give torque values in newton metres, say plainly ' +
  'when a part must be replaced rather than repaired, and offer a workshop slot when a job needs a stand. Use the tools to look ' +
  'up parts and bookings; never invent a stock level or a price.';

/** The JSON Schema (draft 2020-12) the chat records follow. */
export const CHAT_SCHEMA = {
  $schema: 'https://json-schema.org/draft/2020-12/schema',
  type: 'object',
  required: ['id', 'messages'],
  properties: {
    id: { type: 'string', pattern: '^sw-[0-9]{10}$' },
    messages: {
      type: 'array',
      minItems: 2,
      items: {
        type: 'object',
        required: ['role'],
        properties: {
          role: { enum: ['system', 'user', 'assistant', 'tool'] },
          content: { type: ['string', 'null'] },
          tool_call_id: { type: 'string' },
          tool_calls: {
            type: 'array',
            items: {
              type: 'object',
              required: ['id', 'type', 'function'],
              properties: { id: { type: 'string' }, type: { const: 'function' }, function: { type: 'object', required: ['name', 'arguments'] } },
            },
          },
        },
      },
    },
  },
};

const ID_DIGITS = 10;
const TICKET = 'ticket ';

/**
 * Pools of serialised pieces for chat lines: user turns, assistant turns and tool exchanges (an
 * assistant call and the tool's answer), each a JSON fragment, so lines are assembled by copying.
 */
export function chatPools({ seed = 3, users = 6000, assistants = 6000, tools = 1500, userBytes = 260, assistantBytes = 700 } = {}) {
  const rand = prng(seed);
  const text = textMaker(seed + 1);
  // Each turn's text starts with a ticket number rewritten on every line, so no two records repeat a
  // turn's whole text (a cache of whole strings would flatter the counts); the words still repeat as
  // a vocabulary does.
  const turn = (role, bytes) => Buffer.from(JSON.stringify({ role, content: `${TICKET}${'0'.repeat(ID_DIGITS)}: ${text(bytes)}` }));
  const user = Array.from({ length: users }, () => turn('user', userBytes * (0.4 + rand() * 1.2)));
  const assistant = Array.from({ length: assistants }, () => turn('assistant', assistantBytes * (0.4 + rand() * 1.2)));
  const tool = Array.from({ length: tools }, (_, i) => {
    const id = `call_${i.toString(36)}${Math.floor(rand() * 1e6)}`;
    const sku = `HGR-${100 + Math.floor(rand() * 900)}`;
    const call = { role: 'assistant', content: null, tool_calls: [{ id, type: 'function', function: { name: rand() < 0.5 ? 'lookup_part' : 'find_booking', arguments: JSON.stringify({ sku, member: Math.floor(rand() * 9000) }) } }] };
    const answer = { role: 'tool', tool_call_id: id, content: JSON.stringify({ sku, in_stock: rand() < 0.7, price_eur: Math.round(rand() * 9000) / 100, note: text(80) }) };
    return Buffer.from(`${JSON.stringify(call)},${JSON.stringify(answer)}`);
  });
  return { user, assistant, tool, system: Buffer.from(JSON.stringify({ role: 'system', content: SYSTEM_PROMPT })), rand };
}

/** Where a turn fragment's ticket digits start: after `{"role":"user","content":"ticket ` (the role's length differs). */
function turnDigitsAt(role) {
  return `{"role":"${role}","content":"${TICKET}`.length;
}

const USER_DIGITS_AT = turnDigitsAt('user');
const ASSISTANT_DIGITS_AT = turnDigitsAt('assistant');

/** Writes into a buffer at `at` a chat line with the given id; returns the new offset. */
function putChatLine(buf, at, id, pools, targetBytes) {
  const { user, assistant, tool, system, rand } = pools;
  const start = at;
  at += buf.write('{"id":"sw-', at, 'latin1');
  at += buf.write(String(id).padStart(ID_DIGITS, '0'), at, 'latin1');
  at += buf.write('","messages":[', at, 'latin1');
  at += system.copy(buf, at);
  let first = true;
  let turnNo = 0;
  const putTurn = (pool, digitsAt) => {
    const piece = pool[Math.floor(rand() * pool.length)];
    piece.copy(buf, at);
    buf.write(String((id * 8 + turnNo++) % 10 ** ID_DIGITS).padStart(ID_DIGITS, '0'), at + digitsAt, 'latin1');
    at += piece.length;
  };
  do {
    buf[at++] = 44; // ,
    putTurn(user, USER_DIGITS_AT);
    if (first && rand() < 0.25) {
      buf[at++] = 44;
      at += tool[Math.floor(rand() * tool.length)].copy(buf, at);
    }
    first = false;
    buf[at++] = 44;
    putTurn(assistant, ASSISTANT_DIGITS_AT);
  } while (at - start < targetBytes * (0.5 + rand()));
  at += buf.write(']}\n', at, 'latin1');
  return at;
}

/** Pools of short plain texts for ~120-byte lines. */
export function shortPool({ seed = 5, size = 40_000, bytes = 90 } = {}) {
  const rand = prng(seed);
  const text = textMaker(seed + 1);
  return { texts: Array.from({ length: size }, () => Buffer.from(JSON.stringify(text(bytes * (0.6 + rand() * 0.8))))), rand };
}

function putShortLine(buf, at, id, pool) {
  at += buf.write('{"id":', at, 'latin1');
  at += buf.write(String(id), at, 'latin1');
  at += buf.write(',"text":', at, 'latin1');
  at += pool.texts[Math.floor(pool.rand() * pool.texts.length)].copy(buf, at);
  at += buf.write('}\n', at, 'latin1');
  return at;
}

const WRITE_BYTES = 16 * 1024 * 1024;

/** Writes a JSONL file of about `bytes` bytes, line by line from `put`; returns {bytes, lines}. */
function writeLines(path, bytes, put) {
  const fd = openSync(path, 'w');
  const buf = Buffer.allocUnsafe(WRITE_BYTES + 4 * 1024 * 1024);
  let total = 0;
  let lines = 0;
  try {
    while (total < bytes) {
      let at = 0;
      while (at < WRITE_BYTES && total + at < bytes) at = put(buf, at, lines++);
      writeSync(fd, buf, 0, at);
      total += at;
    }
  } finally {
    closeSync(fd);
  }
  return { bytes: total, lines };
}

/** A chat shard (about 2.5 KB a line by default: `lineBytes` steers it) of about `bytes` bytes. */
export function writeChatShard(path, bytes, { lineBytes = 2100, seed = 3 } = {}) {
  const pools = chatPools({ seed });
  return writeLines(path, bytes, (buf, at, i) => putChatLine(buf, at, i + 1, pools, lineBytes));
}

/** A plain-text shard of ~120-byte lines of about `bytes` bytes. */
export function writeShortShard(path, bytes, { seed = 5 } = {}) {
  const pool = shortPool({ seed });
  return writeLines(path, bytes, (buf, at, i) => putShortLine(buf, at, 1_000_000_000 + i, pool));
}

/** Distinct texts (record-sized, unique: no pool) of about `megabytes` MB in total, for the token rows. */
export function tokenTexts(megabytes, { seed = 11 } = {}) {
  const rand = prng(seed);
  const text = textMaker(seed + 1);
  const out = [];
  let total = 0;
  while (total < megabytes * 1e6) {
    const t = text(200 + Math.floor(rand() * 2400));
    out.push(t);
    total += Buffer.byteLength(t);
  }
  return out;
}
