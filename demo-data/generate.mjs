#!/usr/bin/env node
// Writes the demo shards of the Spoke & Chain Co-op support assistant: chats, preference pairs,
// plain text, their columnar copies, a JSON Schema and a manifest of every deliberately broken
// record. Deterministic: a seeded generator, so every run writes the same bytes.
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
  fs.writeFileSync(path.join(OUT, 'chat-sft.schema.json'), json(SCHEMA));
  fs.writeFileSync(path.join(OUT, '.vscode', 'settings.json'), json(SETTINGS));
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
    },
    broken: [...chat.manifest, ...fromValue.manifest, ...pairs.manifest, ...plain.manifest, ...edge.manifest, ...columnar.manifest],
    absent: [
      { rule: 'line-too-long', why: 'needs a line over the configured limit (64 MiB by default), too large to commit; tests generate one in a temporary folder' },
    ],
  };
  fs.writeFileSync(path.join(OUT, 'manifest.json'), json(manifest));
}

main();
