#!/usr/bin/env node
// Writes the demo shards of the Spoke & Chain Co-op support assistant: chats, preference pairs,
// plain text, their columnar copies, a shard in each other training-data layout (tool calls,
// instruction, prompt/completion, transcripts, feedback, images, evaluation items), a JSON Schema
// and a manifest of every deliberately broken record. Deterministic: a seeded generator, so every run writes the same bytes.
//
// Usage: node demo-data/generate.mjs [output-dir]   (default: the folder of this script)

import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRequire } from 'node:module';
import {
  Table, Field, List, Struct, Utf8, vectorFromArray, tableToIPC,
} from 'apache-arrow';
import * as S from './scenario.mjs';
import { TOPICS, THANKS } from './topics.mjs';

const require = createRequire(import.meta.url);
const parquet = require('parquet-wasm');

const HERE = path.dirname(fileURLToPath(import.meta.url));
const OUT = path.resolve(process.argv[2] ?? HERE);
const SEED = 20240917;

// ---------------------------------------------------------------- random numbers

/** mulberry32: small, fast and the same on every machine, which is all a demo needs. */
function makeRng(seed) {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return {
    next,
    int: (lo, hi) => lo + Math.floor(next() * (hi - lo + 1)),
    pick: (arr) => arr[Math.floor(next() * arr.length)],
    chance: (p) => next() < p,
    sample(arr, n) {
      const copy = arr.slice();
      const out = [];
      while (out.length < n && copy.length) out.push(copy.splice(Math.floor(next() * copy.length), 1)[0]);
      return out;
    },
  };
}

const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August',
  'September', 'October', 'November', 'December'];

function drawSlots(rng) {
  return {
    name: rng.pick(S.MEMBERS),
    mechanic: rng.pick(S.MECHANICS),
    bike: rng.pick(S.BIKES),
    pad: rng.pick(S.PADS),
    tyre: rng.pick(S.TYRES),
    size: rng.pick(S.TYRE_SIZES),
    chain: rng.pick(S.CHAINS),
    sealant: rng.pick(S.SEALANTS),
    mech: rng.pick(S.MECHS),
    tool: rng.pick(S.LIBRARY_TOOLS),
    day: rng.pick(S.DAYS),
    month: rng.pick(MONTHS),
    km: rng.pick([1800, 2500, 3200, 4000, 5500, 7000]),
  };
}

const pad2 = (n) => String(n).padStart(2, '0');
function drawDate(rng) {
  return `2024-${pad2(rng.int(1, 12))}-${pad2(rng.int(1, 28))}`;
}
function drawTimestamp(rng) {
  return `${drawDate(rng)}T${pad2(rng.int(7, 22))}:${pad2(rng.int(0, 59))}:00Z`;
}
/** A 2024 date on which the workshop is open, in ISO form and as a member would say it. */
function drawOpenDay(rng) {
  const names = ['Sunday', 'Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday'];
  const d = new Date(Date.UTC(2024, rng.int(0, 11), rng.int(1, 28)));
  while (![2, 4, 6].includes(d.getUTCDay())) d.setUTCDate(d.getUTCDate() + 1);
  const day = names[d.getUTCDay()];
  return { iso: d.toISOString().slice(0, 10), day, spoken: `${day} ${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]}` };
}

function callId(rng) {
  const abc = 'abcdefghijklmnopqrstuvwxyz0123456789';
  let id = 'call_';
  for (let i = 0; i < 10; i++) id += abc[rng.int(0, abc.length - 1)];
  return id;
}

// ---------------------------------------------------------------- chats

/** Some members open with a greeting; it makes the first turns read less like a form. */
function greet(rng, s, text) {
  return rng.chance(0.25) ? `${rng.pick(['Hi!', 'Hello!', 'Hey there!', `Hi, it's ${s.name}.`])} ${text}` : text;
}

/** Draws one ask of a topic and an answer that fits it. */
function askAndAnswer(rng, topic, s) {
  const i = rng.int(0, topic.asks.length - 1);
  return [topic.asks[i](s), topic.answers[rng.pick(topic.match?.[i] ?? [i])](s)];
}

function plainChat(rng) {
  const s = drawSlots(rng);
  const topic = rng.pick(TOPICS);
  const turns = [];
  if (rng.chance(0.4)) turns.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
  const [ask, answer] = askAndAnswer(rng, topic, s);
  turns.push({ role: 'user', content: greet(rng, s, ask) }, { role: 'assistant', content: answer });
  const more = rng.sample(topic.followups, rng.int(0, topic.followups.length));
  for (const [q, a] of more) {
    turns.push({ role: 'user', content: q(s) }, { role: 'assistant', content: a(s) });
  }
  if (rng.chance(0.3) && !turns[turns.length - 2].content.startsWith('Thanks')) {
    const [q, a] = rng.pick(THANKS);
    turns.push({ role: 'user', content: q(s) }, { role: 'assistant', content: a(s) });
  }
  return turns;
}

/** A chat where the assistant looks something up through a tool call and answers from it. */
function toolChat(rng) {
  const s = drawSlots(rng);
  const id = callId(rng);
  const turns = [];
  if (rng.chance(0.6)) turns.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
  const kind = rng.int(0, 2);
  let call; let result; let answer; let ask;
  if (kind === 0) {
    const when = drawOpenDay(rng);
    const slots = rng.sample(when.day === 'Saturday' ? S.SAT_SLOTS : S.SLOTS, rng.int(0, 3)).sort();
    ask = rng.pick([
      `Are there any free benches on ${when.spoken}? I want to replace my chain.`,
      `Can I get a bench with a workstand on ${when.spoken}?`,
      `Is the workshop busy on ${when.spoken}? I'd like to come in and true a wheel.`,
    ]);
    call = { name: 'check_workshop_slots', arguments: JSON.stringify({ date: when.iso, bench: 'workstand' }) };
    result = { date: when.iso, day: when.day, free_slots: slots, mechanics_on_duty: rng.sample(S.MECHANICS, 2) };
    answer = slots.length
      ? `Yes, on ${when.spoken} there ${slots.length === 1 ? 'is a free bench' : 'are free benches'} at ${slots.join(', ')}. ${result.mechanics_on_duty.join(' and ')} will be on duty. Benches are held for 15 minutes after the start time; just give your name at the counter.`
      : `Unfortunately every workstand bench on ${when.spoken} is booked already. You can still drop in: benches free up during the ${when.day === 'Saturday' ? 'day' : 'evening'}, and ${result.mechanics_on_duty[0]} keeps a waiting list at the counter. Would another day work?`;
  } else if (kind === 1) {
    const part = rng.pick([
      { part: 'brake pads', variant: s.pad, price: 14 }, { part: 'chain', variant: s.chain, price: 22 },
      { part: 'tyre', variant: `${s.tyre} ${s.size}`, price: 34 }, { part: 'sealant', variant: `${s.sealant} 500 ml`, price: 12 },
      { part: 'inner tube', variant: s.size, price: 6 },
    ]);
    ask = rng.pick([
      `Do you have ${part.variant} ${part.part === 'sealant' ? 'sealant' : part.part} in stock?`,
      `I need a new ${part.part} (${part.variant}). Is it at the counter right now?`,
    ]);
    const { price, ...wanted } = part;
    call = { name: 'lookup_part_stock', arguments: JSON.stringify(wanted) };
    const count = rng.pick([0, 1, 2, 3, 5, 8, 12]);
    result = { ...wanted, in_stock: count, member_price: price, restock_expected: count ? null : drawDate(rng) };
    answer = count
      ? `Yes, we have ${count} in stock (${part.variant}), at $${price} for members. It's kept behind the counter, so ask whoever is on the till.`
      : `We're out of ${part.variant} at the moment; a restock is expected around ${result.restock_expected}. I can't reserve parts, but the counter can note your name so you hear when it arrives.`;
  } else {
    const from = drawDate(rng);
    ask = rng.pick([
      `Is the ${s.tool} free to borrow next week?`,
      `Can you check if the tool library has the ${s.tool} available?`,
    ]);
    call = { name: 'check_tool_library', arguments: JSON.stringify({ tool: s.tool }) };
    const out = rng.chance(0.4);
    result = { tool: s.tool, available: !out, on_loan_until: out ? from : null, deposit: 20 };
    answer = out
      ? `The ${s.tool} is on loan until ${from}. You can book it from then on the members' page; the deposit is $20.`
      : `Good news: the ${s.tool} is available now. Loans are up to seven days with a $20 deposit. Pick it up during opening hours.`;
  }
  turns.push({ role: 'user', content: greet(rng, s, ask) });
  turns.push({ role: 'assistant', content: null, tool_calls: [{ id, type: 'function', function: call }] });
  turns.push({ role: 'tool', tool_call_id: id, content: JSON.stringify(result) });
  turns.push({ role: 'assistant', content: answer });
  if (rng.chance(0.4)) {
    const [q, a] = rng.pick(THANKS);
    turns.push({ role: 'user', content: q(s) }, { role: 'assistant', content: a(s) });
  }
  return turns;
}

const LOG_JOBS = [
  (s) => `replaced front brake pads (${s.pad})`,
  (s) => `replaced rear brake pads (${s.pad})`,
  (s) => `new chain (${s.chain}), wear was ${s.wear}%`,
  (s) => `trued rear wheel, ${s.lat} mm lateral`,
  (s) => `trued front wheel, ${s.lat} mm lateral`,
  (s) => `indexed rear mech (${s.mech})`,
  (s) => `puncture repair rear, glass in tyre`,
  (s) => `puncture repair front, pinch flat`,
  (s) => `new tyre ${s.tyre} ${s.size}`,
  (s) => `tubeless sealant top-up ${s.sealant}, ${s.ml} ml`,
  (s) => `headset adjusted, play removed`,
  (s) => `bottom bracket regreased, creak gone`,
  (s) => `replaced gear cable and housing`,
  (s) => `replaced broken spoke, drive side, ${s.spoke} mm`,
  (s) => `hub cones adjusted, rear`,
  (s) => `saddle height set for new rider`,
];

/** A member pastes the fleet's whole maintenance log: long enough to overflow the context. */
function longLogChat(rng) {
  const s = drawSlots(rng);
  const entries = rng.int(420, 520);
  const lines = [];
  const counts = new Map();
  for (let i = 0; i < entries; i++) {
    const js = {
      ...drawSlots(rng), wear: rng.pick(['0.5', '0.75', '1.0']), lat: rng.pick(['0.5', '1', '1.5', '2']),
      ml: rng.pick([30, 60, 90]), spoke: rng.int(258, 298),
    };
    const j = rng.int(0, LOG_JOBS.length - 1);
    counts.set(j, (counts.get(j) ?? 0) + 1);
    lines.push(`${drawDate(rng)} | fleet #${rng.int(1, 40)} ${js.bike} | ${LOG_JOBS[j](js)} | ${rng.int(10, 90)} min | ${js.mechanic}`);
  }
  const top = [...counts.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0]).slice(0, 3);
  const label = (j) => LOG_JOBS[j]({ pad: '…', chain: '…', wear: '…', lat: '…', mech: '…', tyre: '…', size: '', sealant: '…', ml: '…', spoke: '…' })
    .replace(/ \(…\)| …| ….*$|, wear.*$|, ….*$/g, '').trim();
  const turns = [];
  if (rng.chance(0.5)) turns.push({ role: 'system', content: S.SYSTEM_PROMPTS[0] });
  turns.push({
    role: 'user',
    content: `Here's the maintenance log for the co-op's community fleet from the spreadsheet (${entries} entries). Can you tell me which jobs come up most, so we can plan the next parts order?\n\n${lines.join('\n')}`,
  });
  turns.push({
    role: 'assistant',
    content: `Thanks, ${s.name}. Across the ${entries} entries, the most frequent jobs are:\n\n${top.map(([j, n], i) => `${i + 1}. ${label(j)}: ${n} times`).join('\n')}\n\nFor the next order I'd stock up on the parts behind those jobs first, and keep a few spare chains and pads at the counter, since wear items come up steadily through the year.`,
  });
  return turns;
}

function chatRecord(rng, messages) {
  const rec = { id: '', source: rng.pick(S.SOURCES), lang: 'en', created: drawTimestamp(rng) };
  if (rng.chance(0.2)) rec.ticket_id = rng.int(10000, 99999);
  rec.messages = messages;
  return rec;
}

// ---------------------------------------------------------------- broken records

const enc = (text) => Buffer.from(text, 'utf8');
const line = (rec) => enc(JSON.stringify(rec));

/** Builds the raw bytes with `@@BAD@@` replaced by bytes that are not valid UTF-8. */
function withBadBytes(rec, marker, bytes) {
  const text = JSON.stringify(rec);
  const at = text.indexOf(marker);
  return Buffer.concat([enc(text.slice(0, at)), Buffer.from(bytes), enc(text.slice(at + marker.length))]);
}

function shortChat(s) {
  return [
    { role: 'user', content: `Is the workshop open on ${s.day}?` },
    { role: 'assistant', content: `Yes, on ${s.day} we're open ${s.day === 'Saturday' ? '10:00 to 16:00' : '17:30 to 21:00'}.` },
  ];
}

/** Each maker gets a fresh valid record and returns the broken line, what is wrong, and the rules expected. */
const CHAT_BREAKERS = [
  (r) => {
    const t = JSON.stringify(r);
    return { bytes: enc(t.slice(0, Math.floor(t.length * 0.6))), what: 'record cut off mid-line (truncated object)', rules: ['json-syntax'] };
  },
  (r) => ({ bytes: enc(JSON.stringify(r).replace(/\}$/, ',}')), what: 'trailing comma before the closing brace', rules: ['json-syntax'] }),
  (r, s) => ({
    bytes: enc(`{'id': '${r.id}', 'source': 'member-chat', 'lang': 'en', 'created': '${r.created}', 'messages': [{'role': 'user', 'content': 'Is the workshop open on ${s.day}?'}, {'role': 'assistant', 'content': 'Yes, from ${s.day === 'Saturday' ? '10:00' : '17:30'}.'}]}`),
    what: 'single-quoted strings (not JSON)', rules: ['json-syntax'],
  }),
  (r) => ({ bytes: enc(JSON.stringify(r) + JSON.stringify({ ...r, id: r.id.replace(/.$/, 'x') })), what: 'two records on one line (a missing newline)', rules: ['json-syntax'] }),
  () => ({ bytes: enc(''), what: 'blank line', rules: ['line-blank'] }),
  () => ({ bytes: enc('   \t  '), what: 'line of spaces and a tab only', rules: ['line-blank'] }),
  (r, s) => {
    r.messages = [
      { role: 'user', content: `The price list on the caf@@BAD@@ wall says the ${s.pad} pads are $14. Still right?` },
      { role: 'assistant', content: `Yes, $14 a pair for members and $18 for non-members.` },
    ];
    return { bytes: withBadBytes(r, '@@BAD@@', [0xe9]), what: 'Latin-1 byte 0xE9 inside a string (invalid UTF-8)', rules: ['utf8-invalid'] };
  },
  (r) => {
    r.messages = [
      { role: 'user', content: `How much is a year's membership in @@BAD@@?` },
      { role: 'assistant', content: `It's $48 a year, or $20 concession.` },
    ];
    return { bytes: withBadBytes(r, '@@BAD@@', [0xe2, 0x82, 0x20]), what: 'a three-byte UTF-8 sequence cut after two bytes', rules: ['utf8-invalid'] };
  },
  (r) => ({ bytes: line(r.messages), what: 'a bare list of turns instead of a record object', rules: ['record-not-object', 'schema-violation'] }),
  () => ({ bytes: enc('17'), what: 'a number instead of a record object', rules: ['record-not-object', 'schema-violation'] }),
  (r) => {
    const { messages, ...head } = r;
    const t = JSON.stringify({ ...head, ticket_id: 1, messages }).replace('"ticket_id":1', '"ticket_id":9007199254740993');
    return { bytes: enc(t), what: 'ticket_id 9007199254740993 is beyond 2^53-1 and loses precision', rules: ['number-unsafe'] };
  },
  (r) => {
    const { messages, ...head } = r;
    const t = JSON.stringify({ ...head, ticket_id: 1, messages }).replace('"ticket_id":1', '"ticket_id":18446744073709551615');
    return { bytes: enc(t), what: 'ticket_id 2^64-1 (a database unsigned id) is beyond 2^53-1', rules: ['number-unsafe'] };
  },
  (r) => ({
    bytes: enc(JSON.stringify(r).replace(/"source":"[a-z-]+"/, '"source":"member-chat","source":"email-digest"')),
    what: 'key "source" appears twice', rules: ['key-duplicate'],
  }),
  (r) => ({
    bytes: enc(JSON.stringify(r).replace(/"lang":"en"/, '"lang":"en","created":"2024-01-01","lang":"en"')),
    what: 'key "lang" appears twice and "created" twice with different values', rules: ['key-duplicate'],
  }),
  (r) => {
    r.messages = [
      { role: 'user', content: 'Rode the new chain 80 km today, smooth as anything \ud83d' },
      { role: 'assistant', content: 'Great to hear! Remember to check it with the chain checker every thousand kilometres or so.' },
    ];
    return { bytes: line(r), what: 'lone high surrogate escape \\ud83d (half an emoji)', rules: ['surrogate-unpaired'] };
  },
  (r) => {
    delete r.messages;
    return { bytes: line(r), what: 'messages field missing', rules: ['chat-turns-not-list', 'schema-violation'] };
  },
  (r, s) => {
    r.messages = `Member asked about ${s.pad} pads; told them $14.`;
    return { bytes: line(r), what: 'messages is a string, not a list of turns', rules: ['chat-turns-not-list', 'schema-violation'] };
  },
  (r) => {
    r.messages = { user: 'Are you open on Sunday?', assistant: 'Only the first Sunday of the month.' };
    return { bytes: line(r), what: 'messages is an object, not a list of turns', rules: ['chat-turns-not-list', 'schema-violation'] };
  },
  (r) => {
    r.messages = [];
    return { bytes: line(r), what: 'messages is an empty list', rules: ['chat-turns-empty'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, 'user: and on holidays?', { role: 'user', content: 'And over the holidays?' },
      { role: 'assistant', content: "We close from 24 December to 1 January." }];
    return { bytes: line(r), what: 'a turn that is a string, not an object', rules: ['chat-turn-not-object', 'schema-violation'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, { content: 'Do I need to book?' }, { role: 'user', content: 'Sorry, I meant: do I need to book a bench?' },
      { role: 'assistant', content: 'No need; benches are first come, first served, but booking guarantees one.' }];
    return { bytes: line(r), what: 'a turn without a role', rules: ['chat-role-missing', 'schema-violation'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, { role: 'mechanic', content: `${s.mechanic} here, I'll be on the Saturday shift too.` },
      { role: 'user', content: 'Great, see you then.' }, { role: 'assistant', content: 'See you Saturday!' }];
    return { bytes: line(r), what: 'unknown role "mechanic"', rules: ['chat-role-unknown', 'schema-violation'] };
  },
  (r, s) => {
    r.messages = [{ role: 'user', content: `My ${s.bike} brakes squeal. Help?` }, { role: 'assistant', content: '' }];
    return { bytes: line(r), what: 'assistant content is an empty string', rules: ['chat-content-empty'] };
  },
  (r) => {
    r.messages = [{ role: 'user', content: ' \n  ' }, { role: 'assistant', content: 'It looks like your message came through empty. What can I help with?' }];
    return { bytes: line(r), what: 'user content is only white space', rules: ['chat-content-empty'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, { role: 'system', content: S.SYSTEM_PROMPTS[1] }, { role: 'user', content: 'And what are the dues?' },
      { role: 'assistant', content: "$48 a year, or $20 concession." }];
    return { bytes: line(r), what: 'system turn in the middle of the chat', rules: ['chat-system-misplaced'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [{ role: 'system', content: S.SYSTEM_PROMPTS[0] },
      { role: 'assistant', content: `Hi, I'm ${S.ASSISTANT}. How can I help with your bike today?` }, u, a];
    return { bytes: line(r), what: 'first turn after the system prompt is the assistant', rules: ['chat-first-not-user'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, { role: 'user', content: 'Also, can I bring a friend who is not a member?' }, a];
    return { bytes: line(r), what: 'two user turns in a row', rules: ['chat-role-repeated'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, { role: 'assistant', content: 'Oh, and bring your membership card.' }];
    return { bytes: line(r), what: 'two assistant turns in a row', rules: ['chat-role-repeated'] };
  },
  (r, s) => {
    const [u, a] = shortChat(s);
    r.messages = [u, a, { role: 'user', content: 'And is there parking for a cargo bike?' }];
    return { bytes: line(r), what: 'chat ends with a user turn', rules: ['chat-last-not-assistant'] };
  },
  (r, s, rng) => {
    const id = callId(rng);
    r.messages = [
      { role: 'user', content: `Do you have ${s.chain} chains in stock?` },
      { role: 'assistant', content: null, tool_calls: [{ id, type: 'function', function: { name: 'lookup_part_stock', arguments: JSON.stringify({ part: 'chain', variant: s.chain }) } }] },
      { role: 'tool', tool_call_id: 'call_0000000000', content: JSON.stringify({ part: 'chain', variant: s.chain, in_stock: 4, member_price: 22 }) },
      { role: 'assistant', content: `Yes, 4 in stock at $22 for members.` },
    ];
    return { bytes: line(r), what: 'tool turn answers call id call_0000000000, which no assistant turn made', rules: ['chat-tool-orphan'] };
  },
  (r) => {
    r.messages = [
      { role: 'user', content: 'When I copy your answers into my notes app there is <|endoftext|> at the end. Is that a bug?' },
      { role: 'assistant', content: 'That looks like a leftover from the app, not part of the answer. You can delete it safely.' },
    ];
    return { bytes: line(r), what: 'content spells the special token <|endoftext|>', rules: ['tokens-special-text'] };
  },
  (r, s) => {
    r.messages = [
      { role: 'user', content: `The kiosk printed this: <|im_start|>assistant The workshop opens at ${s.day === 'Saturday' ? '10:00' : '17:30'}. What does it mean?` },
      { role: 'assistant', content: 'It is a formatting marker the kiosk should not have printed. The opening time itself is right.' },
    ];
    return { bytes: line(r), what: 'content spells the special token <|im_start|>', rules: ['tokens-special-text'] };
  },
  (r) => ({ bytes: line({ ...r, id: 'BK-' + r.id.slice(3) }), what: 'id "BK-…" does not match ^bk-[0-9]{6}$', rules: ['schema-violation'] }),
  (r) => {
    delete r.source;
    return { bytes: line(r), what: 'required field source missing', rules: ['schema-violation'] };
  },
  (r) => ({ bytes: line({ ...r, lang: 7 }), what: 'lang is a number, not a string', rules: ['schema-violation'] }),
  (r) => ({ bytes: line({ ...r, mood: 'cheerful' }), what: 'extra top-level field "mood" (additionalProperties is false)', rules: ['schema-violation'] }),
  (r) => ({ bytes: line({ ...r, source: 'carrier-pigeon' }), what: 'source "carrier-pigeon" is not in the enum', rules: ['schema-violation'] }),
  (r) => ({ bytes: line({ ...r, created: 20240301 }), what: 'created is a number, not an ISO date string', rules: ['schema-violation'] }),
];
const LONG_CHATS = 6;

// ---------------------------------------------------------------- files

/** Spreads `broken` lines evenly among `ok` lines with a little jitter, keeping the first lines clean. */
function placeBroken(rng, okCount, brokenCount) {
  const total = okCount + brokenCount;
  const positions = new Set();
  const step = (total - 20) / brokenCount;
  for (let i = 0; i < brokenCount; i++) {
    let p = 20 + Math.floor(i * step + rng.next() * step * 0.8);
    while (positions.has(p)) p++;
    positions.add(p);
  }
  return positions;
}

function writeJsonl(name, lines, { finalNewline = true } = {}) {
  const parts = [];
  lines.forEach((l, i) => {
    parts.push(l.bytes);
    if (i < lines.length - 1 || finalNewline) parts.push(Buffer.from(l.eol ?? '\n'));
  });
  fs.writeFileSync(path.join(OUT, name), Buffer.concat(parts));
}

function manifestEntries(file, lines) {
  const out = [];
  lines.forEach((l, i) => {
    if (l.what) out.push({ file, line: i + 1, what: l.what, rules: l.rules });
  });
  return out;
}

function buildChatSft(rng) {
  const OK = 2000;
  const breakers = CHAT_BREAKERS.length + LONG_CHATS;
  const positions = placeBroken(rng, OK, breakers);
  const longAt = new Set(rng.sample([...positions], LONG_CHATS));
  const lines = [];
  const valid = [];
  let b = 0;
  for (let i = 0; i < OK + breakers; i++) {
    const id = `bk-${String(i + 1).padStart(6, '0')}`;
    if (longAt.has(i)) {
      const rec = chatRecord(rng, longLogChat(rng));
      rec.id = id;
      lines.push({ bytes: line(rec), what: 'a pasted maintenance log: well over 8,192 cl100k_base tokens', rules: ['tokens-over-context'] });
    } else if (positions.has(i)) {
      const s = drawSlots(rng);
      const rec = chatRecord(rng, plainChat(rng));
      rec.id = id;
      lines.push(CHAT_BREAKERS[b++](rec, s, rng));
    } else {
      const rec = chatRecord(rng, rng.chance(0.06) ? toolChat(rng) : plainChat(rng));
      rec.id = id;
      lines.push({ bytes: line(rec) });
      valid.push(rec);
    }
  }
  writeJsonl('chat-sft.jsonl', lines);
  return { valid, manifest: manifestEntries('chat-sft.jsonl', lines), lines: lines.length };
}

function buildFromValue(rng) {
  const MAP = { system: 'system', user: 'human', assistant: 'gpt' };
  const lines = [];
  const toFromValue = (turns) => turns.map((t) => ({ from: MAP[t.role], value: t.content }));
  const head = (n) => ({ id: `bk-${String(500000 + n).padStart(6, '0')}`, source: rng.pick(S.SOURCES), lang: 'en', created: drawTimestamp(rng) });
  const broken = new Map([
    [37, (rec) => {
      rec.conversations.splice(rec.conversations.length - 1, 0, { from: 'mechanic', value: 'Tobias here: I can look at it on Thursday.' });
      return { what: 'unknown speaker "mechanic"', rules: ['chat-role-unknown', 'schema-violation'] };
    }],
    [91, (rec) => {
      rec.conversations.push({ from: 'human', value: 'One more thing: do you sell helmets?' });
      return { what: 'chat ends with a human turn', rules: ['chat-last-not-assistant'] };
    }],
    [150, (rec) => {
      rec.conversations[rec.conversations.length - 1].value = '';
      return { what: 'last gpt turn is empty', rules: ['chat-content-empty'] };
    }],
  ]);
  for (let n = 1; n <= 203; n++) {
    const rec = { ...head(n), conversations: toFromValue(plainChat(rng)) };
    const br = broken.get(n);
    const info = br ? br(rec) : {};
    lines.push({ bytes: line(rec), ...info });
  }
  writeJsonl('chat-sft-from-value.jsonl', lines);
  return { manifest: manifestEntries('chat-sft-from-value.jsonl', lines), lines: lines.length };
}

const WEAK_ANSWERS = [
  () => `I'm not sure. Maybe ask at a bike shop.`,
  () => `That's a common problem. Honestly it's probably time for a new bike.`,
  () => `Just keep riding it; these things usually sort themselves out.`,
  () => `The workshop is open every day from 9 to 5, so come whenever.`,
  () => `Members can't do that themselves; you'll have to pay a mechanic to do it.`,
  (s) => `Look it up online, ${s.name}. There are plenty of videos.`,
  () => `Bend it back by hand, that's what everyone does.`,
  () => `Yes.`,
];

function buildPairs(rng) {
  const lines = [];
  const broken = new Map([
    [23, (r) => { delete r.rejected; return { what: 'rejected side missing', rules: ['pair-side-missing'] }; }],
    [64, (r) => { r.chosen = ''; return { what: 'chosen side is an empty string', rules: ['pair-side-empty'] }; }],
    [118, (r) => { r.rejected = '   '; return { what: 'rejected side is only white space', rules: ['pair-side-empty'] }; }],
    [141, (r) => { r.rejected = r.chosen; return { what: 'chosen and rejected are identical', rules: ['pair-identical'] }; }],
    [252, (r) => { r.rejected = r.chosen; return { what: 'chosen and rejected conversations are identical', rules: ['pair-identical'] }; }],
    [207, (r) => { r.chosen = []; return { what: 'chosen conversation is an empty list', rules: ['pair-side-empty'] }; }],
    [233, (r) => {
      r.rejected[0] = { ...r.rejected[0], content: `${r.rejected[0].content} Also, what are your opening hours?` };
      return { what: 'the prompt turns of chosen and rejected differ', rules: ['pair-prompt-mismatch'] };
    }],
    [281, (r) => {
      r.chosen.splice(1, 2);
      return { what: 'chosen drops the middle prompt turns that rejected keeps', rules: ['pair-prompt-mismatch'] };
    }],
  ]);
  const convAt = new Set([207, 233, 252, 281]);
  for (let n = 1; n <= 300; n++) {
    const s = drawSlots(rng);
    const topic = rng.pick(TOPICS);
    const id = `pp-${String(n).padStart(6, '0')}`;
    let rec;
    if (convAt.has(n) || rng.chance(0.2)) {
      const [fq, fa] = rng.pick(topic.followups);
      const [ask, answer] = askAndAnswer(rng, topic, s);
      const prompt = [
        { role: 'user', content: ask },
        { role: 'assistant', content: answer },
        { role: 'user', content: fq(s) },
      ];
      rec = {
        id, prompt,
        chosen: [...prompt.map((t) => ({ ...t })), { role: 'assistant', content: fa(s) }],
        rejected: [...prompt.map((t) => ({ ...t })), { role: 'assistant', content: rng.pick(WEAK_ANSWERS)(s) }],
      };
    } else {
      const [ask, answer] = askAndAnswer(rng, topic, s);
      rec = { id, prompt: ask, chosen: answer, rejected: rng.pick(WEAK_ANSWERS)(s) };
    }
    const br = broken.get(n);
    const info = br ? br(rec) : {};
    lines.push({ bytes: line(rec), ...info });
  }
  writeJsonl('preference-pairs.jsonl', lines);
  return { manifest: manifestEntries('preference-pairs.jsonl', lines), lines: lines.length };
}

const NEWSLETTER = [
  (s) => `Thank you to everyone who came to the spring clean-up. ${s.mechanic} and a crew of twelve volunteers sorted three crates of donated parts, and the spoke drawer is finally in order. The next clean-up is in ${s.month}; tea and biscuits provided.`,
  (s) => `The kids' bike day is back on the first Sunday of every month, 11:00 to 14:00. Last time we handed out ${s.n} refurbished bikes, each with a safety check and a lock. If you have an outgrown bike in the shed, bring it along.`,
  (s) => `Our wheel basics class is full for ${s.month}, but we've added a second date. ${s.mechanic} will cover truing, spoke replacement and tension, with six truing stands and plenty of practice wheels.`,
  (s) => `Membership news: dues stay at $48 a year, with the $20 concession rate unchanged. Work-trade members covered ${s.n} volunteer hours last quarter. Thank you, the workshop would not run without you.`,
  (s) => `New in the tool library: a second ${s.tool}, bought with the proceeds from the autumn bike sale. Loans are still up to seven days, and the booking page now shows when each tool is due back.`,
  (s) => `A reminder from the workshop: please wipe down the benches and put tools back on their outlines before you leave. ${s.mechanic} found a ${s.tool} in the parts bin last week, which is not where it lives.`,
  (s) => `The general meeting is on the last Thursday of ${s.month} at 19:00 in the workshop. On the agenda: the budget, a proposal to open on a second Saturday afternoon, and electing two new members to the coordinating group.`,
  (s) => `We now stock ${s.tyre} tyres in ${s.size}, a popular choice among our commuting members for their puncture protection. Members get 15% off at the counter, as with all parts.`,
];

const FORUM = [
  (s) => `Has anyone run ${s.tyre} tyres through a winter? I'm on a ${s.bike} and about ${s.n} km a week, mostly on wet roads. My last set lasted one season and I'm wondering if it's worth the extra.`,
  (s) => `Tip for anyone indexing a ${s.mech} rear mech: check the hanger alignment first. I spent an hour on the barrel adjuster before ${s.mechanic} pointed out the hanger was bent. Five minutes with the alignment tool and it shifts perfectly.`,
  (s) => `Just finished my first tubeless conversion at the Saturday session. The tyres would not seat with a track pump, but the tubeless inflator from the tool library popped them on first try. ${s.sealant} sealant, 80 ml each side.`,
  (s) => `Question for the wheel builders: my rear wheel keeps losing tension on the drive side after a few hundred kilometres. Should I use thread lock on the nipples, or is that a sign the tension was too low to begin with?`,
  (s) => `Measured my chain with the checker at the bench: 0.75% at ${s.n} km. Replaced it with a ${s.chain} and the cassette was fine, no skipping. Replacing on time really does pay off.`,
  (s) => `Anyone know a good way to stop disc brakes squealing in the rain? I've cleaned the rotors and sanded the ${s.pad} pads but the noise comes back after every wet ride.`,
];

const GUIDE_TITLES = {
  'brake-pads': 'Checking and replacing disc brake pads', 'disc-rub': 'Stopping a rubbing disc brake',
  tubeless: 'Setting up tubeless tyres', puncture: 'Finding the cause of repeated punctures',
  'chain-wear': 'Measuring chain wear', 'chain-care': 'Cleaning and lubricating a chain',
  indexing: 'Indexing a rear derailleur', 'limit-screws': 'Setting derailleur limit screws',
  truing: 'Truing a wheel', 'broken-spoke': 'Replacing a broken spoke',
  'bottom-bracket': 'Tracking down a creak', headset: 'Adjusting a threadless headset',
  pressure: 'Choosing tyre pressure', fit: 'Setting saddle height', cassette: 'Removing a cassette',
  hubs: 'Servicing hubs', 'rim-brake': 'Adjusting rim brakes',
};

function plainTextRecord(rng, n) {
  const s = { ...drawSlots(rng), n: rng.int(12, 240) };
  const kind = rng.pick(S.TEXT_SOURCES);
  let text;
  if (kind === 'newsletter') text = rng.sample(NEWSLETTER, rng.int(1, 3)).map((f) => f(s)).join('\n\n');
  else if (kind === 'forum-post') text = rng.pick(FORUM)(s);
  else if (kind === 'repair-guide') {
    const topics = TOPICS.filter((t) => GUIDE_TITLES[t.key]);
    const t = rng.pick(topics);
    text = `${GUIDE_TITLES[t.key]}\n\n${rng.pick(t.answers)(s)}`;
  } else {
    text = rng.pick([
      `Workshop notice: the open workshop closes early at 19:00 on ${s.day} ${drawDate(rng)} for a volunteer training evening.`,
      `Workshop notice: the ${s.tool} is out for repair. Bookings are paused until it's back.`,
      `Workshop notice: the parts counter is cash-only on ${s.day} while the card reader is replaced.`,
    ]);
  }
  return { id: `pt-${String(n).padStart(6, '0')}`, text, source: kind };
}

function buildPlainText(rng) {
  const lines = [];
  const valid = [];
  const broken = new Map([
    [77, (r) => ({ bytes: enc(JSON.stringify(r).slice(0, 40)), what: 'record cut off mid-line (truncated object)', rules: ['json-syntax'] })],
    [312, () => ({ bytes: enc(''), what: 'blank line', rules: ['line-blank'] })],
    [468, (r) => ({ bytes: line({ id: r.id, title: 'Spring newsletter', source: r.source }), what: 'no text field (nothing to count tokens on; no rule in the current set)', rules: [] })],
    [640, (r) => {
      const guides = [];
      for (let k = 0; k < 8; k++) {
        for (const t of TOPICS) {
          if (!GUIDE_TITLES[t.key]) continue;
          const s = drawSlots(rng);
          guides.push(`${GUIDE_TITLES[t.key]} (edition ${k + 1})\n\n${t.answers.map((a) => a(s)).join('\n\n')}`);
        }
      }
      return { bytes: line({ ...r, text: `The Spoke & Chain workshop handbook, all editions\n\n${guides.join('\n\n')}`, source: 'repair-guide' }), what: 'the whole workshop handbook in one record: well over 8,192 cl100k_base tokens', rules: ['tokens-over-context'] };
    }],
    [905, (r) => ({ bytes: line({ ...r, text: `${r.text}<|endoftext|>` }), what: 'text ends with the special token <|endoftext|> spelled out', rules: ['tokens-special-text'] })],
  ]);
  for (let n = 1; n <= 1005; n++) {
    const rec = plainTextRecord(rng, n);
    const br = broken.get(n);
    if (br) lines.push(br(rec));
    else {
      lines.push({ bytes: line(rec) });
      valid.push(rec);
    }
  }
  writeJsonl('plain-text.jsonl', lines);
  return { valid, manifest: manifestEntries('plain-text.jsonl', lines), lines: lines.length };
}

function buildEdgeCases(rng) {
  const chat = (n, turns) => ({ id: `bk-${String(900000 + n).padStart(6, '0')}`, source: 'workshop-kiosk', lang: 'en', created: drawTimestamp(rng), messages: turns });
  const s = drawSlots(rng);
  const lines = [
    { bytes: Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), line(chat(1, shortChat(s)))]), what: 'UTF-8 byte order mark at the start of the file', rules: ['bom-present'] },
    { bytes: line(chat(2, plainChat(rng))), eol: '\r\n' },
    { bytes: enc(` \t ${JSON.stringify(chat(3, shortChat(s)))}  `) },
    { bytes: line(chat(4, plainChat(rng))), eol: '\r\n' },
    { bytes: enc('\r'), what: 'an empty line ending in CRLF (blank once the CR is dropped)', rules: ['line-blank'] },
    { bytes: enc(JSON.stringify(chat(6, [{ role: 'user', content: 'Caf\u00e9 open? \ud83d\udeb2' }, { role: 'assistant', content: 'The caf\u00e9 corner is open during the Saturday workshop.' }])).replace('é open', '\\u00e9 open')) },
    { bytes: line(chat(7, [{ role: 'user', content: 'Line one\u2028line two of my question: is the "bleed kit" \\ the mineral-oil one?' }, { role: 'assistant', content: 'Yes, the bleed kit in the library is for mineral-oil brakes (path: shelf A/3).' }])).toString().replace('A/3', 'A\\/3') },
    { bytes: line(chat(8, plainChat(rng))), eol: '\r\n' },
    { bytes: line(chat(9, toolChat(rng))) },
    { bytes: line(chat(10, shortChat(s))) },
  ].map((l) => ({ ...l, bytes: Buffer.isBuffer(l.bytes) ? l.bytes : enc(l.bytes) }));
  writeJsonl('edge-cases.jsonl', lines, { finalNewline: false });
  return { manifest: manifestEntries('edge-cases.jsonl', lines), lines: lines.length };
}

// ---------------------------------------------------------------- columnar copies

const TURN = new Struct([new Field('role', new Utf8(), false), new Field('content', new Utf8(), true)]);
const MESSAGES = new List(new Field('item', TURN, false));

function chatTable(rows) {
  return new Table({
    id: vectorFromArray(rows.map((r) => r.id), new Utf8()),
    source: vectorFromArray(rows.map((r) => r.source), new Utf8()),
    lang: vectorFromArray(rows.map((r) => r.lang), new Utf8()),
    created: vectorFromArray(rows.map((r) => r.created), new Utf8()),
    messages: vectorFromArray(rows.map((r) => r.messages.map((t) => ({ role: t.role, content: t.content }))), MESSAGES),
  });
}

function inBatches(rows, size, make) {
  const tables = [];
  for (let i = 0; i < rows.length; i += size) tables.push(make(rows.slice(i, i + size)));
  return tables[0].concat(...tables.slice(1));
}

function buildColumnar(chat, plain) {
  const GROUP = 250;
  const rows = chat.valid.filter((r) => r.messages.every((t) => typeof t.content === 'string')).slice(0, 1000)
    .map(({ ticket_id, ...r }) => r);
  // A few broken rows so the record view of a columnar shard has findings to link to.
  const brokenRows = [
    [100, (r) => { r.messages.splice(r.messages.length - 1, 0, { role: 'mechanic', content: 'Volunteer note: bench 3 has the good truing stand.' }); return { what: 'unknown role "mechanic"', rules: ['chat-role-unknown', 'schema-violation'] }; }],
    [420, (r) => { r.messages[r.messages.length - 1].content = ''; return { what: 'last assistant turn is empty', rules: ['chat-content-empty'] }; }],
    [777, (r) => { r.messages.push({ role: 'user', content: 'And one more question about parking?' }); return { what: 'chat ends with a user turn', rules: ['chat-last-not-assistant'] }; }],
  ];
  const manifest = [];
  for (const [at, breakRow] of brokenRows) {
    const r = structuredClone(rows[at]);
    const info = breakRow(r);
    rows[at] = r;
    for (const file of ['chat-sft.parquet', 'chat-sft.arrow']) {
      const unit = file.endsWith('.parquet') ? 'rowGroup' : 'batch';
      manifest.push({ file, row: at, [unit]: Math.floor(at / GROUP), [unit === 'rowGroup' ? 'rowInGroup' : 'rowInBatch']: at % GROUP, ...info });
    }
  }
  const table = inBatches(rows, GROUP, chatTable);
  fs.writeFileSync(path.join(OUT, 'chat-sft.arrow'), tableToIPC(table, 'file'));

  const props = new parquet.WriterPropertiesBuilder()
    .setMaxRowGroupSize(GROUP)
    .setCompression(parquet.Compression.ZSTD)
    .setCreatedBy('shardwise demo generator')
    .build();
  const wasmTable = parquet.Table.fromIPCStream(tableToIPC(table, 'stream'));
  fs.writeFileSync(path.join(OUT, 'chat-sft.parquet'), parquet.writeParquet(wasmTable, props));

  const textRows = plain.valid;
  const textTable = inBatches(textRows, 200, (rs) => new Table({
    id: vectorFromArray(rs.map((r) => r.id), new Utf8()),
    text: vectorFromArray(rs.map((r) => r.text), new Utf8()),
    source: vectorFromArray(rs.map((r) => r.source), new Utf8()),
  }));
  fs.writeFileSync(path.join(OUT, 'plain-text.arrows'), tableToIPC(textTable, 'stream'));
  return { manifest, chatRows: rows.length, textRows: textRows.length };
}

// ---------------------------------------------------------------- shards in each training-data layout

const ids = (prefix, n) => `${prefix}-${String(n).padStart(6, '0')}`;
const topicByKey = (key) => TOPICS.find((t) => t.key === key);

/** Writes a JSON Lines shard from `count` records, breaking the ones `broken` names (line → maker). */
function buildShard(name, count, make, broken) {
  const lines = [];
  for (let n = 1; n <= count; n++) {
    const rec = make(n);
    const br = broken.get(n);
    if (!br) {
      lines.push({ bytes: line(rec) });
      continue;
    }
    const info = br(rec, n);
    lines.push(info.bytes ? info : { bytes: line(rec), ...info });
  }
  writeJsonl(name, lines);
  return { name, manifest: manifestEntries(name, lines), lines: lines.length };
}

// ---- tools: definitions (JSON Schema parameters), the parts counter and the bench book

const TOOL_DEFS = [
  {
    name: 'lookup_part_stock',
    description: 'How many of a part the co-op parts counter has, and the member price.',
    parameters: {
      type: 'object',
      properties: {
        part: { type: 'string', enum: ['brake pads', 'chain', 'tyre', 'sealant', 'inner tube', 'gear cable', 'cassette'] },
        variant: { type: 'string', description: 'Brand, model and size as the member names them' },
      },
      required: ['part'],
    },
  },
  {
    name: 'check_workshop_slots',
    description: 'Free benches in the open workshop on one date.',
    parameters: {
      type: 'object',
      properties: { date: { type: 'string', format: 'date' }, bench: { type: 'string', enum: ['workstand', 'truing stand', 'repair'] } },
      required: ['date'],
    },
  },
  {
    name: 'book_repair_slot',
    description: 'Books a repair bench with a volunteer mechanic for a member.',
    parameters: {
      type: 'object',
      properties: {
        date: { type: 'string', format: 'date' },
        time: { type: 'string', pattern: '^[0-9]{2}:[0-9]{2}$' },
        member: { type: 'string' },
        job: { type: 'string' },
      },
      required: ['date', 'time', 'member'],
    },
  },
  {
    name: 'check_tool_library',
    description: 'Whether a tool of the tool library is free to borrow.',
    parameters: { type: 'object', properties: { tool: { type: 'string' } }, required: ['tool'] },
  },
];
const OPENAI_TOOLS = TOOL_DEFS.map((f) => ({ type: 'function', function: f }));

function stockParts(s) {
  const speed = s.chain.split(' ')[1];
  return [
    { part: 'brake pads', variant: s.pad, label: `${s.pad} brake pads`, price: 14 },
    { part: 'chain', variant: s.chain, label: `a ${s.chain} chain`, price: 22 },
    { part: 'tyre', variant: `${s.tyre} ${s.size}`, label: `${s.tyre} tyres in ${s.size}`, price: 34 },
    { part: 'sealant', variant: `${s.sealant} 500 ml`, label: `${s.sealant} sealant (the 500 ml bottle)`, price: 12 },
    { part: 'inner tube', variant: s.size, label: `inner tubes for ${s.size}`, price: 6 },
    { part: 'gear cable', variant: 'stainless 2100 mm', label: 'a stainless gear cable', price: 4 },
    { part: 'cassette', variant: `${speed} 11-32`, label: `a ${speed} 11-32 cassette`, price: 28 },
  ];
}

const STOCK_ASKS = [
  (p) => `Do you have ${p.label} in stock?`,
  (p) => `I need ${p.label}. Have you got any at the counter right now?`,
  (p) => `Could you check whether the counter has ${p.label}?`,
  (p) => `Quick one before I cycle over: ${p.label}, in stock or not?`,
  (p) => `Is it worth coming in today for ${p.label}, or are you out?`,
];

/** A stock lookup: what the assistant asks the tool, what the tool says, and how the answer reads. */
function stockLookup(rng, s, p) {
  const wanted = { part: p.part, variant: p.variant };
  const count = rng.pick([0, 1, 2, 3, 4, 6, 9, 12]);
  const restock = count ? null : drawDate(rng);
  const result = { ...wanted, in_stock: count, member_price: p.price, restock_expected: restock };
  let answer;
  if (count > 1) {
    answer = `Yes, the counter has ${count} in stock (${p.variant}) at $${p.price} for members.${rng.pick([
      ' Parts are kept behind the counter, so ask whoever is on the till.',
      ' Non-members pay a little more; the till takes cards and cash.',
      ` If you'd like a hand fitting it, ${s.mechanic} is on the next shift.`,
      '',
    ])}`;
  } else if (count === 1) {
    answer = `There's exactly one left (${p.variant}), at $${p.price} for members. The counter can't hold parts, so it's first come, first served.`;
  } else {
    answer = `The counter is out of ${p.variant} right now; a restock is expected around ${restock}.${rng.pick([
      ' The counter can take your name and let you know when it arrives.',
      ' Meanwhile the donated-parts bins sometimes have a usable spare, so have a look when you are in.',
    ])}`;
  }
  return { call: { name: 'lookup_part_stock', args: wanted }, result, answer, count };
}

const JOBS = [
  { job: 'brake bleed', say: 'a brake bleed' }, { job: 'wheel truing', say: 'a wheel that needs truing' },
  { job: 'chain replacement', say: 'a new chain fitted' }, { job: 'gear indexing', say: 'gears that skip' },
  { job: 'bottom bracket creak', say: 'a creaking bottom bracket' }, { job: 'headset adjustment', say: 'a loose headset' },
  { job: 'puncture repair', say: 'a slow puncture' }, { job: 'brake pad change', say: 'new brake pads' },
];

/** Arguments as the trade writes them: mostly a JSON string, sometimes the object itself. */
function writeArgs(rng, obj, asObject) {
  return asObject ? obj : JSON.stringify(obj);
}

function openAiCallTurn(rng, calls, style) {
  const turn = { role: 'assistant', content: null };
  if (style.reasoning) turn.content = [{ type: 'reasoning', text: style.reasoning }];
  else if (style.preface) turn.content = style.preface;
  turn.tool_calls = calls.map((c) => ({ id: c.id, type: 'function', function: { name: c.name, arguments: writeArgs(rng, c.args, style.objectArgs) } }));
  if (style.weightZero) turn.weight = 0;
  return turn;
}

function openAiToolTurn(c, result, named) {
  return { role: 'tool', tool_call_id: c.id, ...(named ? { name: c.name } : {}), content: JSON.stringify(result) };
}

function answerTurn(rng, text) {
  return rng.chance(0.1) ? { role: 'assistant', content: [{ type: 'text', text }] } : { role: 'assistant', content: text };
}

/** A chat with OpenAI-style tool calls: a stock lookup, two lookups at once, a booking, a tool loan. */
function toolCallsRecord(rng, n) {
  const s = drawSlots(rng);
  const flagCalls = rng.chance(0.1);
  const style = () => {
    const r = rng.next();
    return {
      reasoning: r < 0.12 ? rng.pick([
        `The member asks about a part, so I check the counter's stock before answering.`,
        `I should not guess availability; the tools know the bench book and the stock.`,
        `Look it up first, then answer with the count and the member price.`,
      ]) : null,
      preface: r >= 0.12 && r < 0.24 ? rng.pick(['Let me check that for you.', "One moment, I'll look that up.", 'Checking now.']) : null,
      objectArgs: rng.chance(0.15),
      weightZero: flagCalls,
    };
  };
  const named = rng.chance(0.3);
  const messages = [];
  if (rng.chance(0.6)) messages.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
  const kind = rng.pick(['stock', 'stock', 'two-parts', 'book', 'book', 'book-direct', 'library']);
  let used;
  if (kind === 'stock') {
    const p = rng.pick(stockParts(s));
    const look = stockLookup(rng, s, p);
    const c = { id: callId(rng), ...look.call };
    messages.push({ role: 'user', content: greet(rng, s, rng.pick(STOCK_ASKS)(p)) }, openAiCallTurn(rng, [c], style()),
      openAiToolTurn(c, look.result, named), answerTurn(rng, look.answer));
    used = ['lookup_part_stock'];
  } else if (kind === 'two-parts') {
    const [p, q] = rng.sample(stockParts(s), 2);
    const a = stockLookup(rng, s, p);
    const b = stockLookup(rng, s, q);
    const ca = { id: callId(rng), ...a.call };
    const cb = { id: callId(rng), ...b.call };
    messages.push(
      { role: 'user', content: greet(rng, s, rng.pick([
        `Do you have ${p.label} and ${q.label}? I'd like to do both jobs this week.`,
        `Two things: ${p.label}, and ${q.label}. Are they both at the counter?`,
      ])) },
      openAiCallTurn(rng, [ca, cb], style()), openAiToolTurn(ca, a.result, named), openAiToolTurn(cb, b.result, named),
      answerTurn(rng, `${a.count ? `${p.variant}: ${a.count} in stock at $${p.price}.` : `${p.variant}: out of stock, restock around ${a.result.restock_expected}.`} ${b.count ? `${q.variant}: ${b.count} in stock at $${q.price}.` : `${q.variant}: out of stock, restock around ${b.result.restock_expected}.`} Member prices; the counter has both lists.`),
    );
    used = ['lookup_part_stock'];
  } else if (kind === 'book') {
    const when = drawOpenDay(rng);
    const job = rng.pick(JOBS);
    const slots = rng.sample(when.day === 'Saturday' ? S.SAT_SLOTS : S.SLOTS, rng.int(1, 4)).sort();
    const onDuty = rng.sample(S.MECHANICS, 2);
    const c1 = { id: callId(rng), name: 'check_workshop_slots', args: { date: when.iso, bench: 'repair' } };
    messages.push(
      { role: 'user', content: greet(rng, s, rng.pick([
        `Could I book a repair bench on ${when.spoken}? My ${s.bike} needs ${job.say}.`,
        `I'd like a slot with a mechanic on ${when.spoken} for ${job.say}.`,
        `Any room on ${when.spoken}? It's for ${job.say} on my ${s.bike}.`,
      ])) },
      openAiCallTurn(rng, [c1], style()),
      openAiToolTurn(c1, { date: when.iso, day: when.day, free_slots: slots, mechanics_on_duty: onDuty }, named),
      { role: 'assistant', content: slots.length === 1
        ? `On ${when.spoken} there's one repair bench left, at ${slots[0]}, with ${onDuty.join(' and ')} on duty. Shall I book it for you?`
        : `On ${when.spoken} there are repair benches free at ${slots.join(', ')}; ${onDuty.join(' and ')} are on duty. Which time suits you?` },
    );
    const time = rng.pick(slots);
    const c2 = { id: callId(rng), name: 'book_repair_slot', args: { date: when.iso, time, member: s.name, job: job.job } };
    const ref = `R-${rng.int(1000, 9999)}`;
    const bench = rng.int(1, 6);
    messages.push(
      { role: 'user', content: slots.length === 1 ? rng.pick(['Yes please.', 'Great, book it.', `Yes, ${time} is fine.`]) : rng.pick([`${time} please.`, `Let's do ${time}.`, `The ${time} one works for me.`]) },
      openAiCallTurn(rng, [c2], style()),
      openAiToolTurn(c2, { booking_ref: ref, confirmed: true, date: when.iso, time, bench }, named),
      answerTurn(rng, `Booked: bench ${bench} on ${when.spoken} at ${time}, reference ${ref}. ${rng.pick([
        'Benches are held for 15 minutes after the start time, so give your name at the counter when you arrive.',
        `Bring the bike clean if you can; it makes ${job.job} quicker.`,
        'If you cannot make it, reply here or call the counter so someone else can have the bench.',
      ])}`),
    );
    used = ['check_workshop_slots', 'book_repair_slot'];
  } else if (kind === 'book-direct') {
    const when = drawOpenDay(rng);
    const job = rng.pick(JOBS);
    const pool = when.day === 'Saturday' ? S.SAT_SLOTS : S.SLOTS;
    const [time, ...alts] = rng.sample(pool, 3);
    const c = { id: callId(rng), name: 'book_repair_slot', args: { date: when.iso, time, member: s.name, job: job.job } };
    const taken = rng.chance(0.45);
    messages.push(
      { role: 'user', content: greet(rng, s, rng.pick([
        `Please book me in at ${time} on ${when.spoken}; it's for ${job.say}.`,
        `Can you put me down for ${time} on ${when.spoken}? ${job.say[0].toUpperCase()}${job.say.slice(1)}.`,
      ])) },
      openAiCallTurn(rng, [c], style()),
    );
    if (taken) {
      const free = alts.sort();
      messages.push(
        openAiToolTurn(c, { confirmed: false, reason: 'bench taken', alternatives: free }, named),
        answerTurn(rng, `${time} on ${when.spoken} is already taken, sorry. I can offer ${free.join(' or ')} the same day instead. Would one of those work?`),
      );
    } else {
      const ref = `R-${rng.int(1000, 9999)}`;
      messages.push(
        openAiToolTurn(c, { booking_ref: ref, confirmed: true, date: when.iso, time, bench: rng.int(1, 6) }, named),
        answerTurn(rng, `You're booked for ${time} on ${when.spoken} (reference ${ref}). ${s.mechanic} or another volunteer will help with the ${job.job}.`),
      );
    }
    used = ['book_repair_slot'];
  } else {
    const out = rng.chance(0.4);
    const back = drawDate(rng);
    const c = { id: callId(rng), name: 'check_tool_library', args: { tool: s.tool } };
    messages.push(
      { role: 'user', content: greet(rng, s, rng.pick([`Is the ${s.tool} free to borrow this week?`, `Can you check if the tool library has the ${s.tool} in?`])) },
      openAiCallTurn(rng, [c], style()),
      openAiToolTurn(c, { tool: s.tool, available: !out, on_loan_until: out ? back : null, deposit: 20 }, named),
      answerTurn(rng, out
        ? `The ${s.tool} is on loan until ${back}. You can reserve it from then on the members' page; the deposit is $20.`
        : `The ${s.tool} is in. Loans run up to seven days with a $20 deposit; pick it up during opening hours.`),
    );
    used = ['check_tool_library'];
  }
  if (rng.chance(0.3)) {
    const [q, a] = rng.pick(THANKS);
    messages.push({ role: 'user', content: q(s) }, { role: 'assistant', content: a(s) });
  }
  const tools = rng.chance(0.7) ? OPENAI_TOOLS : OPENAI_TOOLS.filter((t) => used.includes(t.function.name));
  return { id: ids('tc', n), source: rng.pick(S.SOURCES), created: drawTimestamp(rng), tools, messages };
}

function firstCall(rec) {
  return rec.messages.find((t) => t.tool_calls?.length).tool_calls[0];
}

function buildToolCalls(rng) {
  const broken = new Map([
    [31, (r) => {
      const fn = firstCall(r).function;
      const args = typeof fn.arguments === 'string' ? JSON.parse(fn.arguments) : fn.arguments;
      fn.arguments = `{${Object.entries(args).map(([k, v]) => `'${k}': '${v}'`).join(', ')}}`;
      return { what: 'tool-call arguments written with single quotes (not JSON)', rules: ['tool-arguments-invalid'] };
    }],
    [74, (r) => {
      const fn = firstCall(r).function;
      const text = typeof fn.arguments === 'string' ? fn.arguments : JSON.stringify(fn.arguments);
      fn.arguments = text.slice(0, Math.floor(text.length / 2));
      return { what: 'tool-call arguments cut off halfway (not JSON)', rules: ['tool-arguments-invalid'] };
    }],
    [97, (r) => ({
      bytes: enc(JSON.stringify(r).replace(/"created":"[^"]+"/, (m) => `${m},"created":"2024-02-30T09:00:00Z"`)),
      what: 'key "created" appears twice', rules: ['key-duplicate'],
    })],
    [118, (r) => {
      const tool = r.messages.find((t) => t.role === 'tool');
      tool.tool_call_id = tool.tool_call_id.slice(0, -1) + (tool.tool_call_id.endsWith('x') ? 'y' : 'x');
      return { what: 'a tool answer names a call id no assistant turn made (one character off)', rules: ['chat-tool-orphan'] };
    }],
    [152, (r) => {
      const last = r.messages.map((t) => t.role).lastIndexOf('tool');
      r.messages.splice(last + 1);
      return { what: 'the chat stops at the tool answer, before the assistant replies', rules: ['chat-last-not-assistant'] };
    }],
    [189, (r) => {
      const user = r.messages.find((t) => t.role === 'user');
      r.messages = [...(r.messages[0].role === 'system' ? [r.messages[0]] : []), user, { role: 'assistant', content: null, tool_calls: [] }];
      return { what: 'assistant turn with null content and an empty tool_calls list', rules: ['chat-content-empty'] };
    }],
    [213, (r) => {
      const t = JSON.stringify(r);
      return { bytes: enc(t.slice(0, Math.floor(t.length * 0.7))), what: 'record cut off mid-line (truncated object)', rules: ['json-syntax'] };
    }],
    [240, (r) => {
      const tool = r.messages.find((t) => t.role === 'tool');
      tool.content += '<|im_end|>';
      return { what: 'a tool answer ends with the chat marker <|im_end|> spelled out', rules: ['tokens-special-text'] };
    }],
  ]);
  return buildShard('tool-calls.jsonl', 260, (n) => toolCallsRecord(rng, n), broken);
}

// ---- conversations with from/value speakers, tool calls as function_call/observation turns

const FLAT_TOOLS = TOOL_DEFS.filter((t) => t.name !== 'book_repair_slot');

function fromValueRecord(rng, n, needsCall) {
  const s = drawSlots(rng);
  const conv = [];
  const withTools = rng.chance(0.55) || needsCall;
  if (rng.chance(withTools ? 0.8 : 0.45)) conv.push({ from: 'system', value: rng.pick(S.SYSTEM_PROMPTS) });
  if (withTools) {
    const kind = rng.pick(['stock', 'stock', 'slots', 'library']);
    let ask; let call; let result; let answer;
    if (kind === 'stock') {
      const p = rng.pick(stockParts(s));
      const look = stockLookup(rng, s, p);
      ask = rng.pick(STOCK_ASKS)(p);
      call = look.call;
      result = look.result;
      answer = look.answer;
    } else if (kind === 'slots') {
      const when = drawOpenDay(rng);
      const slots = rng.sample(when.day === 'Saturday' ? S.SAT_SLOTS : S.SLOTS, rng.int(0, 3)).sort();
      ask = rng.pick([
        `Is there a free workstand on ${when.spoken}? I want to swap my cassette.`,
        `How busy is the workshop on ${when.spoken}? I'd need a truing stand for an hour.`,
      ]);
      call = { name: 'check_workshop_slots', args: { date: when.iso, bench: ask.includes('truing') ? 'truing stand' : 'workstand' } };
      result = { date: when.iso, free_slots: slots };
      answer = slots.length
        ? `There's room on ${when.spoken} at ${slots.join(', ')}. Benches aren't reserved through me, so arrive close to the time and give your name at the counter.`
        : `Everything is taken on ${when.spoken}, I'm afraid. Benches often free up later in the session, and the counter keeps a waiting list.`;
    } else {
      const out = rng.chance(0.4);
      const back = drawDate(rng);
      ask = rng.pick([`Can I borrow the ${s.tool} this weekend?`, `Is the ${s.tool} back in the tool library?`]);
      call = { name: 'check_tool_library', args: { tool: s.tool } };
      result = { tool: s.tool, available: !out, on_loan_until: out ? back : null };
      answer = out ? `Not yet: the ${s.tool} is out until ${back}.` : `Yes, the ${s.tool} is in. Loans are up to seven days, with a $20 deposit.`;
    }
    conv.push(
      { from: 'human', value: greet(rng, s, ask) },
      { from: 'function_call', value: JSON.stringify({ name: call.name, arguments: call.args }) },
      { from: 'observation', value: JSON.stringify(result) },
      { from: 'gpt', value: answer },
    );
    if (rng.chance(0.3)) {
      const [q, a] = rng.pick(THANKS);
      conv.push({ from: 'human', value: q(s) }, { from: 'gpt', value: a(s) });
    }
  } else {
    const MAP = { system: 'system', user: 'human', assistant: 'gpt' };
    for (const t of plainChat(rng)) if (t.role !== 'system') conv.push({ from: MAP[t.role], value: t.content });
  }
  const rec = { id: ids('wf', n), source: rng.pick(S.SOURCES), created: drawTimestamp(rng), conversations: conv };
  if (withTools) rec.tools = FLAT_TOOLS;
  return rec;
}

function buildWorkshopFromValue(rng) {
  const broken = new Map([
    [27, (r) => {
      const t = r.conversations.find((x) => x.from === 'function_call');
      const { name, arguments: a } = JSON.parse(t.value);
      t.value = `${name}(${Object.entries(a).map(([k, v]) => `${k}="${v}"`).join(', ')})`;
      return { what: 'function_call turn written as a function call expression, not JSON', rules: ['tool-arguments-invalid'] };
    }],
    [63, (r, n) => {
      const at = r.conversations.findIndex((t) => t.from === 'human');
      r.conversations.splice(at + 1, 0, { from: 'volunteer', value: `${S.MECHANICS[n % S.MECHANICS.length]} here from the workshop floor: I can have a look on Thursday.` });
      return { what: 'unknown speaker "volunteer"', rules: ['chat-role-unknown'] };
    }],
    [104, (r) => {
      const at = r.conversations.findIndex((t) => t.from === 'human');
      r.conversations.splice(at + 1, 0, { from: 'human', value: 'Sorry, pressed enter too early.' });
      return { what: 'two human turns in a row', rules: ['chat-role-repeated'] };
    }],
    [141, (r) => {
      const at = r.conversations.findIndex((t) => t.from === 'observation');
      r.conversations.splice(at + 1);
      return { what: 'the chat stops at the observation, before the assistant replies', rules: ['chat-last-not-assistant'] };
    }],
    [177, (r) => {
      const at = r.conversations.findIndex((t) => t.from === 'gpt');
      r.conversations.splice(at + 1, 0, { from: 'system', value: S.SYSTEM_PROMPTS[2] });
      if (at + 2 === r.conversations.length) {
        r.conversations.push({ from: 'human', value: 'And are you open on public holidays?' },
          { from: 'gpt', value: 'The workshop closes on public holidays; the newsletter lists the dates for the year.' });
      }
      return { what: 'a system turn in the middle of the chat', rules: ['chat-system-misplaced'] };
    }],
    [205, (r) => {
      r.conversations[r.conversations.length - 1].value = '';
      return { what: 'the last gpt turn is empty', rules: ['chat-content-empty'] };
    }],
  ]);
  return buildShard('workshop-chats-from-value.jsonl', 220, (n) => fromValueRecord(rng, n, n === 27 || n === 141), broken);
}

// ---- instruction records

const AREAS = {
  'brake-pads': 'brakes', 'disc-rub': 'brakes', 'rim-brake': 'brakes', tubeless: 'tyres', puncture: 'tyres', pressure: 'tyres',
  'chain-wear': 'drivetrain', 'chain-care': 'drivetrain', indexing: 'drivetrain', 'limit-screws': 'drivetrain', cassette: 'drivetrain',
  'bottom-bracket': 'drivetrain', truing: 'wheels', 'broken-spoke': 'wheels', hubs: 'wheels', headset: 'steering and fit', fit: 'steering and fit',
  hours: 'workshop', 'tool-library': 'workshop', volunteering: 'workshop', classes: 'workshop', donations: 'workshop', refurbished: 'workshop',
  dues: 'membership', ebike: 'e-bikes',
};
const AREA_LIST = [...new Set(Object.values(AREAS))];

const ANSWER_INSTRUCTIONS = [
  "Answer the member's question as the co-op's help assistant.",
  'Reply to this message from a co-op member.',
  'You are staffing the co-op help desk. Respond to the member below.',
  'Write the help desk reply to the following question.',
];

const NOTICES = [
  (s, d) => [`Write a short workshop notice: the open workshop closes at 19:00 on ${s.day} ${d} for volunteer training.`,
    `Workshop notice: on ${s.day} ${d} the open workshop closes early, at 19:00, for a volunteer training evening. Benches booked after 19:00 will be moved; the counter will contact you. Thanks for your patience.`],
  (s) => [`Write a two-sentence notice that the ${s.tool} is out for repair.`,
    `The ${s.tool} from the tool library is out for repair. Loans and bookings are paused until it's back, and we'll post here when it is.`],
  (s) => [`Draft a notice that the parts counter takes cash only on ${s.day} while the card reader is replaced.`,
    `Heads up: on ${s.day} the parts counter is cash only while the card reader is replaced. Workshop dues can still be paid online as usual.`],
  (s) => [`Write a friendly reminder asking members to put tools back on their outlines.`,
    `A friendly reminder: please put every tool back on its outline before you leave the bench. ${s.mechanic} found a ${s.tool} in the parts bin last week, which is not where it lives!`],
];

function logEntries(rng, count) {
  const out = [];
  for (let i = 0; i < count; i++) {
    const js = { ...drawSlots(rng), wear: rng.pick(['0.5', '0.75', '1.0']), lat: rng.pick(['0.5', '1', '1.5']), ml: rng.pick([30, 60, 90]), spoke: rng.int(258, 298) };
    out.push({ date: drawDate(rng), fleet: rng.int(1, 40), bike: js.bike, job: rng.pick(LOG_JOBS)(js), minutes: rng.pick([15, 20, 30, 45, 60, 75]), mechanic: js.mechanic });
  }
  return out.sort((a, b) => a.date.localeCompare(b.date));
}

function instructionRecord(rng, n) {
  const s = drawSlots(rng);
  const topic = rng.pick(TOPICS);
  const rec = { id: ids('in', n) };
  if (rng.chance(0.3)) rec.system = rng.pick(S.SYSTEM_PROMPTS);
  const kind = rng.pick(['answer', 'answer', 'answer', 'direct', 'direct', 'classify', 'notice', 'log']);
  if ((kind === 'answer' || kind === 'direct') && rng.chance(0.35) && topic.followups.length) {
    const [ask, answer] = askAndAnswer(rng, topic, s);
    const [fq, fa] = rng.pick(topic.followups);
    rec.history = [[ask, answer]];
    rec.instruction = fq(s);
    rec.input = '';
    rec.output = fa(s);
  } else if (kind === 'answer') {
    const [ask, answer] = askAndAnswer(rng, topic, s);
    Object.assign(rec, { instruction: rng.pick(ANSWER_INSTRUCTIONS), input: greet(rng, s, ask), output: answer });
  } else if (kind === 'direct') {
    const [ask, answer] = askAndAnswer(rng, topic, s);
    Object.assign(rec, { instruction: ask, ...(rng.chance(0.5) ? { input: '' } : {}), output: answer });
  } else if (kind === 'classify') {
    const [ask] = askAndAnswer(rng, topic, s);
    Object.assign(rec, {
      instruction: `Which area of the workshop does this question belong to? Answer with one of: ${AREA_LIST.join(', ')}.`,
      input: ask,
      output: AREAS[topic.key],
    });
  } else if (kind === 'notice') {
    const [instruction, output] = rng.pick(NOTICES)(s, drawDate(rng));
    Object.assign(rec, { instruction, output });
  } else {
    const entries = logEntries(rng, rng.int(3, 6));
    const minutes = entries.reduce((a, e) => a + e.minutes, 0);
    const people = [...new Set(entries.map((e) => e.mechanic))];
    Object.assign(rec, {
      instruction: rng.pick(['Summarise these workshop log entries for the volunteers\' handover note.', 'Turn this log into a one-paragraph handover note for the next shift.']),
      input: entries.map((e) => `${e.date} | fleet #${e.fleet} ${e.bike} | ${e.job} | ${e.minutes} min | ${e.mechanic}`).join('\n'),
      output: `${entries.length} jobs logged between ${entries[0].date} and ${entries[entries.length - 1].date}, ${minutes} minutes of bench time in all, by ${people.join(', ').replace(/, ([^,]*)$/, ' and $1')}. Jobs: ${entries.map((e) => `fleet #${e.fleet}, ${e.job}`).join('; ')}.`,
    });
  }
  return rec;
}

function buildInstruction(rng) {
  const broken = new Map([
    [22, (r) => { delete r.output; return { what: 'no output field', rules: ['instruction-output-missing'] }; }],
    [58, (r) => { r.output = ''; return { what: 'output is an empty string', rules: ['instruction-output-missing'] }; }],
    [96, (r) => { r.output = ' \n'; return { what: 'output is only white space', rules: ['instruction-output-missing'] }; }],
    [133, (r) => {
      const turns = longLogChat(rng);
      const user = turns.find((t) => t.role === 'user').content;
      const assistant = turns.find((t) => t.role === 'assistant').content;
      Object.assign(r, {
        instruction: 'Tell the fleet coordinator which jobs come up most in this maintenance log, so they can plan the next parts order.',
        input: user.slice(user.indexOf('\n\n') + 2),
        output: assistant,
      });
      delete r.history;
      return { what: 'the whole fleet maintenance log as input: well over 8,192 cl100k_base tokens', rules: ['tokens-over-context'] };
    }],
    [171, (r) => ({
      bytes: line({ id: r.id, messages: plainChat(rng) }),
      what: 'a chat (messages list) among instruction records', rules: ['layout-mismatch'],
    })],
    [208, (r) => { r.output += '<|endoftext|>'; return { what: 'output ends with the special token <|endoftext|> spelled out', rules: ['tokens-special-text'] }; }],
    [231, (r) => {
      r.output = `${r.output} (Ask at the caf@@BAD@@ corner if the counter is busy.)`;
      return { bytes: withBadBytes(r, '@@BAD@@', [0xe9]), what: 'Latin-1 byte 0xE9 inside the output (invalid UTF-8)', rules: ['utf8-invalid'] };
    }],
  ]);
  return buildShard('instruction.jsonl', 250, (n) => instructionRecord(rng, n), broken);
}

// ---- prompt and completion: strings, turn lists, or a turn-list prompt with a string completion

function promptCompletionRecord(rng, n) {
  const s = drawSlots(rng);
  const topic = rng.pick(TOPICS);
  const [ask, answer] = askAndAnswer(rng, topic, s);
  const form = rng.pick(['strings', 'strings', 'strings', 'turns', 'turns', 'turns-string']);
  const rec = { id: ids('pc', n) };
  if (form === 'strings') {
    const frame = rng.int(0, 2);
    rec.prompt = [ask, `Member: ${ask}\n${S.ASSISTANT}:`, `Question from a co-op member: ${ask}\n\nAnswer:`][frame];
    rec.completion = frame === 0 ? answer : ` ${answer}`;
    return rec;
  }
  const prompt = [];
  if (rng.chance(0.45)) prompt.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
  let reply = answer;
  if (rng.chance(0.35) && topic.followups.length) {
    const [fq, fa] = rng.pick(topic.followups);
    prompt.push({ role: 'user', content: greet(rng, s, ask) }, { role: 'assistant', content: answer }, { role: 'user', content: fq(s) });
    reply = fa(s);
  } else {
    prompt.push({ role: 'user', content: greet(rng, s, ask) });
  }
  rec.prompt = prompt;
  rec.completion = form === 'turns' ? [{ role: 'assistant', content: reply }] : reply;
  return rec;
}

function buildPromptCompletion(rng) {
  const broken = new Map([
    [29, (r) => {
      r.completion.push({ role: 'user', content: 'Thanks! And do I need to book for that?' });
      return { what: 'the conversational completion ends with a user turn', rules: ['chat-last-not-assistant'] };
    }],
    [77, (r) => { r.completion[0].content = ''; return { what: 'the completion turn is empty', rules: ['chat-content-empty'] }; }],
    [123, (r) => {
      const at = r.prompt.findIndex((t) => t.role === 'user');
      r.prompt.splice(at, 0, { role: 'volunteer', content: `Note from ${S.MECHANICS[1]}: this member came in last week about the same bike.` });
      return { what: 'a prompt turn with the unknown role "volunteer"', rules: ['chat-role-unknown'] };
    }],
    [166, (r) => {
      const s = drawSlots(rng);
      const [ask, answer] = askAndAnswer(rng, rng.pick(TOPICS), s);
      return { bytes: line({ id: r.id, prompt: ask, chosen: answer, rejected: rng.pick(WEAK_ANSWERS)(s) }), what: 'a preference pair among prompt/completion records', rules: ['layout-mismatch'] };
    }],
    [204, (r) => ({
      bytes: enc(JSON.stringify({ ...r, ticket_id: 1 }).replace('"ticket_id":1', '"ticket_id":18446744073709551615')),
      what: 'ticket_id 2^64-1 is beyond 2^53-1', rules: ['number-unsafe'],
    })],
    [251, (r) => ({ bytes: enc(JSON.stringify(r) + JSON.stringify({ ...r, id: r.id.replace(/.$/, 'x') })), what: 'two records on one line (a missing newline)', rules: ['json-syntax'] })],
    [283, (r) => {
      const text = typeof r.completion === 'string' ? r.completion : r.completion[0].content;
      const bad = `${text} Enjoy the ride \ud83d`;
      if (typeof r.completion === 'string') r.completion = bad;
      else r.completion[0].content = bad;
      return { what: 'lone high surrogate escape \\ud83d at the end of the completion (half an emoji)', rules: ['surrogate-unpaired'] };
    }],
  ]);
  const forms = new Map([[29, 'turns'], [77, 'turns'], [123, 'turns']]);
  return buildShard('prompt-completion.jsonl', 300, (n) => {
    // The broken conversational records need the conversational form: draw until it comes.
    for (;;) {
      const rec = promptCompletionRecord(rng, n);
      if (!forms.has(n) || Array.isArray(rec.completion)) return rec;
    }
  }, broken);
}

// ---- preference pairs as whole Human/Assistant transcripts

function transcript(turns) {
  return turns.map(([who, text]) => `\n\n${who}: ${text}`).join('');
}

function transcriptPair(rng, multi) {
  const s = drawSlots(rng);
  const topic = rng.pick(TOPICS.filter((t) => !multi || t.followups.length));
  const [ask, answer] = askAndAnswer(rng, topic, s);
  const head = [['Human', greet(rng, s, ask)]];
  let good = answer;
  if (multi) {
    const [fq, fa] = rng.pick(topic.followups);
    head.push(['Assistant', answer], ['Human', fq(s)]);
    good = fa(s);
  }
  return { head, good, weak: rng.pick(WEAK_ANSWERS)(s) };
}

function buildPreferenceTranscripts(rng) {
  const multiAt = new Set([147, 188]);
  const pairs = new Map();
  const make = (n) => {
    const p = transcriptPair(rng, multiAt.has(n) || rng.chance(0.35));
    pairs.set(n, p);
    return { id: ids('tr', n), chosen: transcript([...p.head, ['Assistant', p.good]]), rejected: transcript([...p.head, ['Assistant', p.weak]]) };
  };
  const broken = new Map([
    [19, (r, n) => {
      let other;
      do other = transcriptPair(rng, false); while (other.head[0][1] === pairs.get(n).head[0][1]);
      r.rejected = transcript([...other.head, ['Assistant', other.weak]]);
      return { what: "rejected is another member's chat: the two transcripts share no prompt", rules: ['pair-prompt-mismatch'] };
    }],
    [61, (r) => { r.rejected = r.chosen; return { what: 'chosen and rejected transcripts are identical', rules: ['pair-identical'] }; }],
    [102, (r) => { delete r.rejected; return { what: 'rejected transcript missing', rules: ['pair-side-missing'] }; }],
    [147, (r, n) => {
      r.chosen = transcript(pairs.get(n).head);
      return { what: 'the chosen transcript stops at the Human turn, before any answer', rules: ['chat-last-not-assistant'] };
    }],
    [188, (r, n) => {
      const p = pairs.get(n);
      const head = p.head.map((t) => [...t]);
      head[1][1] = `${head[1][1]} (Edited: see the workshop notice board for details.)`;
      r.rejected = transcript([...head, ['Assistant', p.weak]]);
      return { what: 'the earlier Assistant turn differs between the transcripts', rules: ['pair-prompt-mismatch'] };
    }],
    [226, (r) => { r.chosen += '<|endoftext|>'; return { what: 'chosen transcript ends with the special token <|endoftext|> spelled out', rules: ['tokens-special-text'] }; }],
  ]);
  return buildShard('preference-transcripts.jsonl', 240, make, broken);
}

// ---- preference pairs: a messages prompt with chosen/rejected strings or single turns

function buildPreferenceMessages(rng) {
  const turnFormAt = new Set([118]);
  const stringFormAt = new Set([33, 79]);
  const make = (n) => {
    const s = drawSlots(rng);
    const topic = rng.pick(TOPICS);
    const [ask, answer] = askAndAnswer(rng, topic, s);
    const messages = [];
    if (rng.chance(0.4)) messages.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
    let good = answer;
    if (rng.chance(0.3) && topic.followups.length) {
      const [fq, fa] = rng.pick(topic.followups);
      messages.push({ role: 'user', content: greet(rng, s, ask) }, { role: 'assistant', content: answer }, { role: 'user', content: fq(s) });
      good = fa(s);
    } else {
      messages.push({ role: 'user', content: greet(rng, s, ask) });
    }
    const weak = rng.pick(WEAK_ANSWERS)(s);
    const asTurns = turnFormAt.has(n) || (!stringFormAt.has(n) && rng.chance(0.35));
    const side = (text) => (asTurns ? { role: 'assistant', content: text } : text);
    return { id: ids('pm', n), messages, chosen: side(good), rejected: side(weak) };
  };
  const broken = new Map([
    [33, (r) => { r.rejected = r.chosen; return { what: 'chosen and rejected are the same string', rules: ['pair-identical'] }; }],
    [79, (r) => { r.rejected = ''; return { what: 'rejected is an empty string', rules: ['pair-side-empty'] }; }],
    [118, (r) => { r.chosen.content = ''; return { what: 'the chosen turn has empty content', rules: ['chat-content-empty'] }; }],
    [156, (r) => {
      if (r.messages[0].role === 'system') delete r.messages[0].role;
      else r.messages.unshift({ content: S.SYSTEM_PROMPTS[0] });
      return { what: 'the system prompt turn has no role', rules: ['chat-role-missing'] };
    }],
    [197, (r) => ({ bytes: line({ id: r.id, messages: plainChat(rng) }), what: 'a whole chat with no chosen or rejected answer among preference pairs', rules: ['layout-mismatch'] })],
    [222, () => ({ bytes: enc(''), what: 'blank line', rules: ['line-blank'] })],
  ]);
  return buildShard('preference-messages.jsonl', 240, make, broken);
}

// ---- unpaired feedback: one completion with a boolean label

function buildFeedback(rng) {
  const make = (n) => {
    const s = drawSlots(rng);
    const [ask, answer] = askAndAnswer(rng, rng.pick(TOPICS), s);
    const good = rng.chance(0.6);
    return {
      id: ids('fb', n),
      prompt: rng.chance(0.3) ? `Member question: ${ask}` : greet(rng, s, ask),
      completion: good ? answer : rng.pick(WEAK_ANSWERS)(s),
      label: good,
    };
  };
  const broken = new Map([
    [24, (r) => { r.label = String(r.label); return { what: `label is the string "${r.label}", not a boolean`, rules: ['feedback-label-invalid'] }; }],
    [69, (r) => { r.label = r.label ? 1 : 0; return { what: `label is the number ${r.label}, not a boolean`, rules: ['feedback-label-invalid'] }; }],
    [115, (r) => { r.label = null; return { what: 'label is null', rules: ['feedback-label-invalid'] }; }],
    [158, (r) => { delete r.label; return { what: 'no label: a plain prompt/completion record among feedback records', rules: ['layout-mismatch'] }; }],
    [201, (r) => { r.completion += '<|endoftext|>'; return { what: 'completion ends with the special token <|endoftext|> spelled out', rules: ['tokens-special-text'] }; }],
    [244, (r) => ({ bytes: enc(JSON.stringify(r).replace(/\}$/, ',}')), what: 'trailing comma before the closing brace', rules: ['json-syntax'] })],
  ]);
  return buildShard('feedback.jsonl', 260, make, broken);
}

// ---- images drawn here: tiny PNGs (W3C PNG, one stored deflate block, so the bytes never depend on a zlib build)

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(buf) {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function adler32(buf) {
  let a = 1;
  let b = 0;
  for (const x of buf) {
    a = (a + x) % 65521;
    b = (b + a) % 65521;
  }
  return ((b << 16) | a) >>> 0;
}
const u32 = (n) => { const b = Buffer.alloc(4); b.writeUInt32BE(n >>> 0); return b; };

/** A truecolour PNG of `size`×`size` pixels, `pixel(x, y)` giving [r, g, b]. */
function drawPng(size, pixel) {
  const stride = 1 + size * 3;
  const raw = Buffer.alloc(size * stride);
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) raw.set(pixel(x, y), y * stride + 1 + x * 3);
  }
  const len = raw.length;
  const zlib = Buffer.concat([Buffer.from([0x78, 0x01, 0x01, len & 0xff, len >> 8, ~len & 0xff, (~len >> 8) & 0xff]), raw, u32(adler32(raw))]);
  const chunk = (type, data) => Buffer.concat([u32(data.length), Buffer.from(type, 'latin1'), data, u32(crc32(Buffer.concat([Buffer.from(type, 'latin1'), data])))]);
  const ihdr = Buffer.concat([u32(size), u32(size), Buffer.from([8, 2, 0, 0, 0])]);
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', zlib), chunk('IEND', Buffer.alloc(0))]);
}

const IMAGES = {
  // A brake pad seen edge on: steel backing plate, a sliver of brown friction material, the rotor below.
  'media/worn-brake-pads.png': drawPng(16, (x, y) => {
    if (y >= 4 && y <= 10 && x >= 2 && x <= 13) return (x + y) % 5 === 0 ? [104, 108, 114] : [122, 126, 132];
    if (y === 11 && x >= 3 && x <= 12) return [96, 70, 48];
    if (y === 13) return [184, 188, 194];
    return [232, 231, 226];
  }),
  // Chain links on a diagonal, plates alternating bare steel and rust.
  'media/rusty-chain.png': drawPng(16, (x, y) => {
    const d = Math.abs(x - y);
    if (d <= 2) {
      const link = Math.floor((x + y) / 4);
      if (d <= 0 && (x + y) % 4 === 0) return [40, 38, 36];
      return link % 2 === 0 ? [168, 92, 40] : [78, 78, 82];
    }
    return [241, 237, 229];
  }),
  // A disc rotor: a silver ring with vent holes, a dark spider, a blue heat tint on one side.
  'media/disc-rotor.png': drawPng(16, (x, y) => {
    const dx = x - 7.5;
    const dy = y - 7.5;
    const r = Math.hypot(dx, dy);
    if (r < 2.5) return [58, 58, 62];
    if (r >= 4.5 && r <= 7.5) {
      const a = Math.atan2(dy, dx);
      if (Math.abs(r - 6) < 0.8 && Math.abs(Math.sin(a * 4)) < 0.25) return [236, 236, 236];
      return dx > 2 ? [132, 140, 176] : [178, 182, 188];
    }
    if (r < 4.5 && (Math.abs(dx) < 0.8 || Math.abs(dy) < 0.8)) return [58, 58, 62];
    return [236, 236, 236];
  }),
};
const dataUrl = (file) => `data:image/png;base64,${IMAGES[file].toString('base64')}`;

const PICTURES = [
  {
    file: 'media/worn-brake-pads.png', what: 'brake pads', topic: 'brake-pads',
    asks: [
      () => 'This is what my front brake pads look like after the winter. Do they need replacing?',
      (s) => `Photo of the pads from my ${s.bike}. How much life is left in them?`,
      () => 'Took the wheel out and photographed the caliper. Are these pads finished?',
    ],
    answers: [
      (s) => `From the photo, the friction material is down to a thin strip on the backing plate, well under the 1.5 mm where we'd replace them. Please don't ride far on them: once the plate touches the rotor, braking gets weak and the rotor is damaged. ${s.pad} pads are $14 for members.`,
      (s) => `Those look worn out: there's barely any pad material left above the metal plate. Replace both pads in the caliper together and check the rotor for grooves while the wheel is out. ${s.mechanic} can show you how at the open workshop on ${s.day}.`,
    ],
  },
  {
    file: 'media/rusty-chain.png', what: 'chain', topic: 'chain-care',
    asks: [
      () => 'My bike stood outside all winter and the chain looks like this. Can it be saved?',
      () => 'Is this much rust on the chain a problem?',
      (s) => `Here's the chain on my ${s.bike}. Clean it or bin it?`,
    ],
    answers: [
      (s) => `That's mostly surface rust. Scrub it with degreaser and a brush, dry it, and oil every roller. Then pedal backwards and watch for stiff links: if links stay kinked, or the chain checker reads 0.75% or more, replace it. A ${s.chain} chain is $22 at the counter.`,
      () => 'The orange on the plates is surface rust; what matters is whether the links still move freely. Flex a few by hand. If they stay stiff after cleaning and oiling, fit a new chain, because a badly rusted chain can snap under load.',
    ],
  },
  {
    file: 'media/disc-rotor.png', what: 'rotor', topic: 'disc-rub',
    asks: [
      () => 'Is my rotor warped? It has gone bluish on one side after a long descent.',
      () => 'This is my rear rotor. Does it look bent to you?',
      () => 'The rotor has turned this colour. Is that bad?',
    ],
    answers: [
      () => 'The blue tint is heat discolouration from hard braking. On its own it is usually harmless, though it can glaze the pads. Spin the wheel and watch the gap at the caliper: if the rotor wobbles, straighten it gently with the rotor truing fork from the tool library.',
      (s) => `A little blue or gold colour after a long descent is normal. What matters is that the rotor runs straight and is thicker than the minimum stamped on it, often 1.5 mm. Bring it in on ${s.day} and ${s.mechanic} can measure it.`,
    ],
  },
];

function multimodalRecord(rng, n, form) {
  const s = drawSlots(rng);
  const messages = [];
  if (rng.chance(0.3)) messages.push({ role: 'system', content: rng.pick(S.SYSTEM_PROMPTS) });
  const rec = { id: ids('mm', n), source: rng.pick(['member-chat', 'workshop-kiosk']), created: drawTimestamp(rng) };
  const pic = rng.pick(PICTURES);
  form ??= rng.pick(['parts', 'parts', 'parts', 'placeholder', 'placeholder-two']);
  if (form === 'parts') {
    const ask = rng.pick(pic.asks)(s);
    const textPart = rng.chance(0.2) ? { type: 'text', value: ask } : { type: 'text', text: ask };
    const image = { type: 'image', image: rng.chance(0.35) ? dataUrl(pic.file) : pic.file };
    messages.push({ role: 'user', content: rng.chance(0.5) ? [image, textPart] : [textPart, image] }, { role: 'assistant', content: rng.pick(pic.answers)(s) });
  } else if (form === 'placeholder') {
    const ask = rng.pick(pic.asks)(s);
    messages.push({ role: 'user', content: rng.chance(0.6) ? `<image>\n${ask}` : `${ask}\n<image>` }, { role: 'assistant', content: rng.pick(pic.answers)(s) });
    rec.images = [pic.file];
  } else {
    const [a, b] = rng.sample(PICTURES, 2);
    messages.push(
      { role: 'user', content: `<image>\n<image>\nThe first photo is my ${a.what}, the second my ${b.what}. ${rng.pick(['What do you make of them?', 'Which should I deal with first?', 'Are either of these a problem?'])}` },
      { role: 'assistant', content: `Taking them in order. ${rng.pick(a.answers)(s)}\n\nAs for the ${b.what}: ${rng.pick(b.answers)(s)}` },
    );
    rec.images = [a.file, b.file];
  }
  if (rng.chance(0.3)) {
    const [q, a] = rng.pick(topicByKey(pic.topic).followups);
    messages.push({ role: 'user', content: q(s) }, { role: 'assistant', content: a(s) });
  }
  rec.messages = messages;
  return rec;
}

function buildMultimodal(rng) {
  const forms = new Map([[26, 'placeholder-two'], [71, 'placeholder'], [109, 'placeholder'], [146, 'parts'], [177, 'parts']]);
  const broken = new Map([
    [26, (r) => { r.images.pop(); return { what: 'two <image> placeholders but one image listed', rules: ['media-count-mismatch'] }; }],
    [71, (r) => { r.images = []; return { what: 'an <image> placeholder but an empty images list', rules: ['media-count-mismatch'] }; }],
    [109, (r) => { r.images = ['media/cracked-rim.png']; return { what: 'images names media/cracked-rim.png, which is not beside the shard', rules: ['media-path-missing'] }; }],
    [146, (r) => {
      r.messages.find((t) => t.role === 'user').content.find((p) => p.type === 'image').image = 'media/kiosk-photo-0412.jpg';
      return { what: 'an image part names media/kiosk-photo-0412.jpg, which is not beside the shard', rules: ['media-path-missing'] };
    }],
    [177, (r) => {
      const user = r.messages.find((t) => t.role === 'user');
      user.content = [...user.content.filter((p) => p.type === 'text'), { type: 'sticker', sticker: 'thumbs-up' }];
      return { what: 'a content part of the unknown type "sticker"', rules: ['part-type-unknown'] };
    }],
    [192, (r) => {
      const t = JSON.stringify(r);
      return { bytes: enc(t.slice(0, Math.floor(t.length * 0.5))), what: 'record cut off mid-line (truncated object)', rules: ['json-syntax'] };
    }],
  ]);
  return buildShard('multimodal.jsonl', 200, (n) => multimodalRecord(rng, n, forms.get(n)), broken);
}

// ---- evaluation items: question/answer, problem/solution, multi-turn prompts

const EVAL_FACTS = [
  ['brakes', 'How thin can disc brake pad material get before the pads should be replaced?', 'About 1.5 mm; below that, replace them.'],
  ['tyres', 'How often should tubeless sealant be topped up?', 'Every two to three months, and more often in hot weather.'],
  ['tyres', 'What causes a pinch flat?', 'The tube is squeezed between the rim and an obstacle such as a kerb, usually because the pressure is too low; it leaves two small holes side by side.'],
  ['workshop', 'When does the Spoke & Chain open workshop run?', 'Tuesday and Thursday 17:30 to 21:00, and Saturday 10:00 to 16:00.'],
  ['membership', "How much is a year's membership of the co-op?", '$48 a year, or $20 at the concession rate.'],
  ['membership', 'For how long can members borrow a tool from the tool library?', 'Up to seven days.'],
  ['brakes', 'What does a disc brake rub once per wheel turn usually mean?', 'A caliper slightly out of line, or a small bend in the rotor.'],
  ['drivetrain', 'What should you check first when a rear derailleur will not index?', 'That the derailleur hanger is straight.'],
  ['brakes', 'How do you centre a rubbing disc brake caliper?', 'Loosen both mounting bolts, squeeze and hold the lever, and tighten the bolts again.'],
  ['tyres', 'Why must the vulcanising solution be dry before a patch goes on?', 'It only bonds once its solvent has evaporated; a patch put on wet peels off.'],
  ['steering and fit', "How is play taken out of a threadless headset?", 'Loosen the stem clamp bolts, tighten the top cap until the play is gone, then retighten the stem bolts.'],
  ['brakes', 'What do sintered pads do better than organic ones?', 'They last longer in wet, gritty conditions; organic pads are quieter and bite better when cold.'],
];
const RIM_BSD = { '700x32c': 622, '700x38c': 622, '700x28c': 622, '29x2.2': 622, '27.5x2.4': 584, '26x1.95': 559, '20x1.75': 406 };
const CIRCUMFERENCE = { '700x28c': 2136, '700x32c': 2155, '700x38c': 2180, '29x2.2': 2288, '27.5x2.4': 2220, '26x1.95': 2050, '20x1.75': 1491 };
const PSI_TO_BAR = 0.0689476;

function evalRecord(rng, n) {
  const s = drawSlots(rng);
  const id = ids('ev', n);
  const kind = rng.pick(['fact', 'fact', 'rim', 'open', 'ratio', 'distance', 'wear', 'dues', 'pressure', 'loan', 'turns']);
  if (kind === 'fact') {
    const [category, question, answer] = rng.pick(EVAL_FACTS);
    return { id, category, question, answer };
  }
  if (kind === 'rim') {
    return { id, category: 'tyres', question: `A member's tyre is marked ${s.size}. What is the bead seat diameter of the rim it fits, in millimetres?`, answer: `${RIM_BSD[s.size]} mm.` };
  }
  if (kind === 'open') {
    const when = new Date(Date.UTC(2024, rng.int(0, 11), rng.int(1, 28)));
    const day = ['Sunday', 'Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday'][when.getUTCDay()];
    const iso = when.toISOString().slice(0, 10);
    const hours = day === 'Saturday' ? '10:00 to 16:00' : day === 'Tuesday' || day === 'Thursday' ? '17:30 to 21:00' : null;
    return { id, category: 'workshop', question: `Is the open workshop running on ${iso}?`, answer: hours ? `Yes: ${iso} is a ${day}, and the workshop runs ${hours}.` : `No: ${iso} is a ${day}; the workshop runs on Tuesdays, Thursdays and Saturdays.` };
  }
  const ring = rng.pick([34, 36, 38, 40, 42, 44, 46, 48, 50]);
  const cog = rng.int(11, 28);
  if (kind === 'ratio') {
    return { id, category: 'drivetrain', problem: `A bike has a ${ring}-tooth chainring and a ${cog}-tooth rear cog. What is the gear ratio, to two decimal places?`, solution: `The ratio is chainring teeth over cog teeth: ${ring} / ${cog} = ${(ring / cog).toFixed(2)}.` };
  }
  if (kind === 'distance') {
    const c = CIRCUMFERENCE[s.size];
    return { id, category: 'drivetrain', problem: `How far does a bike travel per crank turn in ${ring}/${cog} on ${s.size} tyres with a wheel circumference of ${c} mm? Give metres to two decimal places.`, solution: `Each crank turn turns the wheel ${ring} / ${cog} times, so the distance is ${ring} / ${cog} × ${c} mm = ${((ring / cog) * c / 1000).toFixed(2)} m.` };
  }
  if (kind === 'wear') {
    const extra = rng.int(6, 30) / 10;
    const length = (304.8 + extra).toFixed(1);
    const pct = (extra / 304.8) * 100;
    return { id, category: 'drivetrain', problem: `Twelve links of a new chain measure 304.8 mm pin to pin. On a member's chain the same twelve links measure ${length} mm. What is the wear in percent, to two decimal places, and is it past a 0.75% limit?`, solution: `Wear is (${length} − 304.8) / 304.8 = ${pct.toFixed(2)}%, which is ${pct >= 0.75 ? 'past the limit: replace the chain' : 'within the limit'}.` };
  }
  if (kind === 'dues') {
    const full = rng.int(1, 4);
    const conc = rng.int(0, 3);
    return { id, category: 'membership', problem: `A household joins the co-op with ${full} full member${full === 1 ? '' : 's'} and ${conc} concession member${conc === 1 ? '' : 's'}. Dues are $48 a year, or $20 concession. What do they pay for a year?`, solution: `${full} × $48 + ${conc} × $20 = $${full * 48 + conc * 20}.` };
  }
  if (kind === 'pressure') {
    const psi = rng.pick([40, 45, 50, 55, 60, 65, 70, 80, 90, 100]);
    return { id, category: 'tyres', problem: `A tyre's sidewall gives a maximum of ${psi} psi. What is that in bar, to one decimal place (1 psi = ${PSI_TO_BAR} bar)?`, solution: `${psi} × ${PSI_TO_BAR} = ${(psi * PSI_TO_BAR).toFixed(1)} bar.` };
  }
  if (kind === 'loan') {
    const d = new Date(Date.UTC(2024, rng.int(0, 11), rng.int(1, 28)));
    const due = new Date(d.getTime() + 7 * 86400000);
    return { id, category: 'membership', problem: `A member borrows the ${s.tool} on ${d.toISOString().slice(0, 10)} for the longest loan the tool library allows (seven days). On which date is it due back?`, solution: `${due.toISOString().slice(0, 10)}.` };
  }
  const topic = rng.pick(TOPICS);
  const [ask] = askAndAnswer(rng, topic, s);
  const [fq] = rng.pick(topic.followups);
  return { id, category: AREAS[topic.key], turns: [ask, fq(s)] };
}

function buildEvalItems(rng) {
  const broken = new Map([
    [31, (r) => {
      const s = drawSlots(rng);
      const [ask, answer] = askAndAnswer(rng, rng.pick(TOPICS), s);
      return { bytes: line({ id: r.id, instruction: ask, input: '', output: answer }), what: 'an instruction record among evaluation items', rules: ['layout-mismatch'] };
    }],
    [60, () => {
      const [category, question, answer] = EVAL_FACTS[4];
      return { bytes: line({ id: ids('ev', 60), category, question, answer: `${answer}<|im_end|>` }), what: 'answer ends with the chat marker <|im_end|> spelled out', rules: ['tokens-special-text'] };
    }],
    [88, () => ({ bytes: line({ item: 4711, scores: [3, 4], passed: true }), what: 'a results row with no text at all among the items', rules: ['tokens-no-text'] })],
    [130, () => {
      const [category, question, answer] = EVAL_FACTS[5];
      return { bytes: enc(JSON.stringify({ id: ids('ev', 130), category, question, answer }).replace(/\}$/, ',"answer":"Seven days."}')), what: 'key "answer" appears twice', rules: ['key-duplicate'] };
    }],
    [175, () => {
      const [category, question, answer] = EVAL_FACTS[1];
      return { bytes: line({ id: ids('ev', 175), category, question: `${question} \udeb2`, answer }), what: 'lone low surrogate escape \\udeb2 in the question (half an emoji)', rules: ['surrogate-unpaired'] };
    }],
    [203, () => ({ bytes: enc('   '), what: 'line of spaces only', rules: ['line-blank'] })],
  ]);
  return buildShard('eval-items.jsonl', 220, (n) => evalRecord(rng, n), broken);
}

// ---- JSON Lines under other names: a `.json` file and an extension-less shard

function buildKioskChats(rng) {
  const make = (n) => {
    const s = drawSlots(rng);
    const turns = rng.chance(0.5) ? shortChat(s) : plainChat(rng);
    return { id: ids('ks', n), kiosk: rng.pick(['front-counter', 'workshop-floor']), created: drawTimestamp(rng), dialog: turns };
  };
  const broken = new Map([
    [41, (r) => { r.dialog.push({ role: 'assistant', content: 'Anything else I can help with at the kiosk?' }); return { what: 'two assistant turns in a row', rules: ['chat-role-repeated'] }; }],
    [88, (r, n) => {
      r.dialog = [{ role: 'system', content: S.SYSTEM_PROMPTS[3] }, { role: 'assistant', content: `Welcome to the ${S.COOP} kiosk! What can I help with?` }, ...shortChat(drawSlots(rng))];
      return { what: 'the first turn after the system turn is the assistant (a kiosk greeting)', rules: ['chat-first-not-user'] };
    }],
    [123, (r) => ({ bytes: enc(JSON.stringify(r).replace(/"/g, "'")), what: 'single-quoted strings (not JSON)', rules: ['json-syntax'] })],
    [150, (r) => { r.dialog.push({ role: 'user', content: 'And where do I lock my bike?' }); return { what: 'chat ends with a user turn', rules: ['chat-last-not-assistant'] }; }],
  ]);
  return buildShard('kiosk-chats.json', 160, make, broken);
}

function buildTrainShard(rng) {
  const make = () => {
    const turns = plainChat(rng);
    return { conversation: turns, source: rng.pick(S.SOURCES), lang: 'en' };
  };
  const broken = new Map([
    [37, (r) => {
      if (r.conversation[0].role === 'system') r.conversation[0].role = 'System';
      else r.conversation.unshift({ role: 'System', content: S.SYSTEM_PROMPTS[0] });
      return { what: 'role "System" (roles are case-sensitive)', rules: ['chat-role-unknown'] };
    }],
    [92, (r) => { r.conversation = []; return { what: 'conversation is an empty list', rules: ['chat-turns-empty'] }; }],
    [144, (r) => ({ bytes: enc(JSON.stringify(r).replace(/\}$/, ',}')), what: 'trailing comma before the closing brace', rules: ['json-syntax'] })],
    [181, (r) => {
      r.conversation = r.conversation.map((t) => `${t.role}: ${t.content}`).join('\n');
      return { what: 'conversation is one string, not a list of turns', rules: ['chat-turns-not-list'] };
    }],
  ]);
  return buildShard('train-00000-of-00001', 200, make, broken);
}

function writeMedia() {
  fs.mkdirSync(path.join(OUT, 'media'), { recursive: true });
  for (const [file, bytes] of Object.entries(IMAGES)) fs.writeFileSync(path.join(OUT, file), bytes);
}

// ---------------------------------------------------------------- schema, settings, manifest

const SCHEMA = {
  $schema: 'https://json-schema.org/draft/2020-12/schema',
  title: 'Spoke & Chain Co-op support chat',
  description: 'One chat of the co-op help assistant, in either the messages/role/content or the conversations/from/value convention.',
  type: 'object',
  required: ['id', 'source', 'lang', 'created'],
  anyOf: [{ required: ['messages'] }, { required: ['conversations'] }],
  additionalProperties: false,
  properties: {
    id: { type: 'string', pattern: '^bk-[0-9]{6}$' },
    source: { enum: S.SOURCES },
    lang: { type: 'string', minLength: 2 },
    created: { type: 'string', pattern: '^[0-9]{4}-[0-9]{2}-[0-9]{2}' },
    ticket_id: { type: 'integer', minimum: 1 },
    messages: { type: 'array', items: { $ref: '#/$defs/turn' } },
    conversations: { type: 'array', items: { $ref: '#/$defs/fromValueTurn' } },
  },
  $defs: {
    turn: {
      type: 'object',
      required: ['role', 'content'],
      additionalProperties: false,
      properties: {
        role: { enum: ['system', 'user', 'assistant', 'tool'] },
        content: { type: ['string', 'null', 'array'] },
        tool_calls: {
          type: 'array',
          items: {
            type: 'object',
            required: ['id', 'type', 'function'],
            properties: {
              id: { type: 'string' },
              type: { const: 'function' },
              function: {
                type: 'object',
                required: ['name', 'arguments'],
                properties: { name: { type: 'string' }, arguments: { type: 'string' } },
              },
            },
          },
        },
        tool_call_id: { type: 'string' },
        name: { type: 'string' },
      },
    },
    fromValueTurn: {
      type: 'object',
      required: ['from', 'value'],
      additionalProperties: false,
      properties: { from: { enum: ['system', 'human', 'gpt'] }, value: { type: 'string' } },
    },
  },
};

const SETTINGS = {
  'shardwise.schemas': {
    'chat-sft*.jsonl': './chat-sft.schema.json',
    'chat-sft.parquet': './chat-sft.schema.json',
    'chat-sft.arrow': './chat-sft.schema.json',
  },
  'workbench.startupEditor': 'none',
  // The demo shows the record view: its JSON Lines shards open there whatever their size.
  'shardwise.recordView.lines': 'always',
};

/** The project file: the same schema mapping for the editor and for `shardwise check demo-data`. */
const PROJECT = {
  schemas: SETTINGS['shardwise.schemas'],
  tokens: { contextLength: 8192 },
  check: { failOn: 'error' },
};

const json = (v) => JSON.stringify(v, null, 2) + '\n';

function main() {
  fs.mkdirSync(path.join(OUT, '.vscode'), { recursive: true });
  // One generator per file, each seeded on its own, so editing one file's recipe leaves the others' bytes alone.
  const chat = buildChatSft(makeRng(SEED));
  const fromValue = buildFromValue(makeRng(SEED + 1));
  const pairs = buildPairs(makeRng(SEED + 2));
  const plain = buildPlainText(makeRng(SEED + 3));
  const edge = buildEdgeCases(makeRng(SEED + 4));
  const columnar = buildColumnar(chat, plain);
  writeMedia();
  // The shards of the other training-data layouts, each with the layout the checks should settle on.
  const layoutShards = [
    [buildToolCalls(makeRng(SEED + 5)), 'turns'],
    [buildWorkshopFromValue(makeRng(SEED + 6)), 'turns'],
    [buildInstruction(makeRng(SEED + 7)), 'instruction'],
    [buildPromptCompletion(makeRng(SEED + 8)), 'prompt-completion'],
    [buildPreferenceTranscripts(makeRng(SEED + 9)), 'preference'],
    [buildPreferenceMessages(makeRng(SEED + 10)), 'preference'],
    [buildFeedback(makeRng(SEED + 11)), 'feedback'],
    [buildMultimodal(makeRng(SEED + 12)), 'turns'],
    [buildEvalItems(makeRng(SEED + 13)), 'eval'],
    [buildKioskChats(makeRng(SEED + 14)), 'turns'],
    [buildTrainShard(makeRng(SEED + 15)), 'turns'],
  ];
  fs.writeFileSync(path.join(OUT, 'chat-sft.schema.json'), json(SCHEMA));
  fs.writeFileSync(path.join(OUT, '.vscode', 'settings.json'), json(SETTINGS));
  fs.writeFileSync(path.join(OUT, 'shardwise.json'), json(PROJECT));
  const manifest = {
    description: 'Every deliberately broken record in the demo shards, with the rule ids the checks are expected to report. Lines are 1-based; rows are 0-based across the whole file.',
    generator: 'demo-data/generate.mjs',
    seed: SEED,
    files: {
      'chat-sft.jsonl': { lines: chat.lines },
      'chat-sft-from-value.jsonl': { lines: fromValue.lines },
      'preference-pairs.jsonl': { lines: pairs.lines },
      'plain-text.jsonl': { lines: plain.lines },
      'edge-cases.jsonl': { lines: edge.lines },
      'chat-sft.parquet': { rows: columnar.chatRows, rowGroupSize: 250, compression: 'zstd' },
      'chat-sft.arrow': { rows: columnar.chatRows, batchSize: 250 },
      'plain-text.arrows': { rows: columnar.textRows, batchSize: 200 },
      ...Object.fromEntries(layoutShards.map(([s, layout]) => [s.name, { lines: s.lines, layout }])),
    },
    broken: [...chat.manifest, ...fromValue.manifest, ...pairs.manifest, ...plain.manifest, ...edge.manifest, ...columnar.manifest,
      ...layoutShards.flatMap(([s]) => s.manifest)],
    absent: [
      { rule: 'line-too-long', why: 'needs a line over the configured limit (64 MiB by default), too large to commit; tests generate one in a temporary folder' },
    ],
  };
  fs.writeFileSync(path.join(OUT, 'manifest.json'), json(manifest));
}

main();
