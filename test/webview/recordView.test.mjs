// The record view in headless Chromium, driven by a scripted host over the protocol.
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { crc32, deflateSync } from 'node:zlib';
import { openView, screenshot, useBrowser } from './harness.mjs';
import { chatDetail, HOSTILE, HOSTILE_TEXT, initMessage, rowFor, rowsAnswer, scriptedHost } from './fixtures.mjs';

const ROW_HEIGHT = 24; // ROW_HEIGHT of src/webview/recordView/gridGeometry.ts
const PAGE = 128; // PAGE of src/webview/recordView/gridGeometry.ts

const env = useBrowser();

async function renderedRows(page) {
  return page.$$eval('.sw-rows .sw-row[data-entry]', (rows) =>
    rows.map((r) => ({
      entry: Number(r.dataset.entry),
      loading: r.classList.contains('sw-row-loading'),
      record: r.querySelector('[data-col="record"]')?.textContent,
      place: r.querySelector('[data-col="place"]')?.textContent,
      tokens: r.querySelector('[data-col="tokens"]')?.textContent,
      id: r.querySelector('[data-field="id"]')?.textContent,
      raw: r.querySelector('[data-col="raw"]')?.textContent,
      severity: r.dataset.severity ?? null,
      selected: r.classList.contains('sw-selected'),
      top: r.getBoundingClientRect().top,
    })),
  );
}

/** Rows inside the scroll viewport's visible box. */
async function visibleRows(page) {
  const box = await page.$eval('.sw-viewport', (v) => {
    const r = v.getBoundingClientRect();
    return { top: r.top, bottom: r.bottom };
  });
  const rows = await renderedRows(page);
  return rows.filter((r) => r.top >= box.top - 1 && r.top + ROW_HEIGHT <= box.bottom + 1);
}

async function waitLoaded(page) {
  await page.waitForFunction(() => {
    const rows = document.querySelectorAll('.sw-rows .sw-row[data-entry]');
    return rows.length > 0 && !document.querySelector('.sw-rows .sw-row-loading');
  });
}

const fmt = (n) => new Intl.NumberFormat('en-US').format(n);

const WEATHER_ARGS = '{\n  "city": "Ghent",\n  "units": "metric"\n}';

/** A tool-calling chat as the host maps it (OpenAI chat format: `tool_calls` with ids, `tool_call_id` on the answer). */
const TOOL_TURNS = [
  { index: 0, role: 'user', content: 'Will it rain on my ride to the co-op?', tokens: 12, pointer: '/messages/0' },
  {
    index: 1,
    role: 'assistant',
    content: '',
    tokens: 25,
    pointer: '/messages/1',
    parts: [
      { kind: 'reasoning', text: 'The rider asks about rain: check the forecast.', pointer: '/messages/1/reasoning_content' },
      { kind: 'tool-call', name: 'get_weather', arguments: WEATHER_ARGS, id: 'call_1', pointer: '/messages/1/tool_calls/0' },
    ],
  },
  { index: 2, role: 'tool', content: '{"rain_mm":0}', tokens: 6, pointer: '/messages/2', answers: { id: 'call_1', name: 'get_weather' } },
  { index: 3, role: 'tool', content: 'late answer', tokens: 3, pointer: '/messages/3', answers: { id: 'call_9', name: null } },
  { index: 4, role: 'assistant', content: 'Dry all day: ride.', tokens: 8, pointer: '/messages/4', trainable: false },
];

function sideTurns(side, texts, tokens) {
  return texts.map((content, i) => ({ index: i, role: i % 2 ? 'assistant' : 'user', content, tokens: tokens[i], pointer: `/${side}/${i}` }));
}

const DIFFERING_PAIR = {
  prompt: { name: 'prompt', pointer: '/system', present: true, text: 'You are the workshop’s repair desk.', turns: null, transcript: false, tokens: 6 },
  chosen: {
    name: 'chosen',
    pointer: '/chosen',
    present: true,
    text: null,
    turns: sideTurns('chosen', ['Hi', 'Hello, how can I help?', 'Tube or tubeless for gravel?', 'Tubeless: fewer pinch flats.'], [2, 7, 10, 12]),
    transcript: true,
    tokens: 31,
  },
  rejected: {
    name: 'rejected',
    pointer: '/rejected',
    present: true,
    text: null,
    turns: sideTurns('rejected', ['Hi', 'Hello, how can I help?', 'Tube or tubeless for road?', 'Tubes.'], [2, 7, 9, 9]),
    transcript: true,
    tokens: 27,
  },
  promptDiffers: 2,
};

/**
 * A 2×2 RGBA PNG built from the W3C PNG Specification: signature, IHDR, one zlib-compressed IDAT
 * (each scanline led by filter type 0), IEND, each chunk closed by its CRC-32 (node:zlib computes both).
 */
function tinyPng() {
  const chunk = (type, data) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(2, 0);
  ihdr.writeUInt32BE(2, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 6; // colour type: RGBA
  const row = [0, 0xd1, 0x86, 0x16, 0xff, 0x37, 0x94, 0xff, 0xff];
  const raw = Buffer.from([...row, ...row]);
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(raw)), chunk('IEND', Buffer.alloc(0))]);
}

/** Opens the view, selects entry 3 and waits for its detail. */
async function openDetail(detailFor, beforeSelect = () => {}) {
  const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost({ detailFor }) });
  await view.send(initMessage(100));
  await waitLoaded(view.page);
  beforeSelect(view.page);
  await view.page.click('.sw-rows .sw-row[data-entry="3"]');
  await view.page.waitForFunction(() => document.querySelector('.sw-detail')?.dataset.entry === '3');
  return view;
}

describe('record view', () => {
  test('a refresh re-asks for the rows on screen and keeps showing them until the answer comes', async () => {
    let hold = false;
    let held = [];
    const host = async (m, view) => {
      if (m.type !== 'requestRows') return;
      if (hold) held.push(m);
      else await view.send(rowsAnswer(m));
    };
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: host });
    try {
      await view.send(initMessage(1000));
      await waitLoaded(view.page);
      const before = await visibleRows(view.page);
      hold = true;
      const from = view.posted.length;
      await view.send({ type: 'refresh' });
      const again = await view.waitForPost((m) => m.type === 'requestRows', { from });
      assert.equal(again.start, 0);
      // While the answer is pending the old rows stay on screen, not loading placeholders.
      const during = await visibleRows(view.page);
      assert.deepEqual(during.map((r) => [r.entry, r.tokens, r.loading]), before.map((r) => [r.entry, r.tokens, false]));
      // The new answer (here: different token counts) replaces them.
      hold = false;
      for (const m of held) {
        const a = rowsAnswer(m);
        a.rows = a.rows.map((r) => ({ ...r, tokens: 4242 }));
        await view.send(a);
      }
      await view.page.waitForFunction(() => document.querySelector('.sw-rows .sw-row[data-entry="0"] [data-col="tokens"]')?.textContent === '4,242');
    } finally {
      await view.close();
    }
  });

  test('renders the visible rows of a 100,000-entry shard with their place and token cells', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(100_000));
      const req = await view.waitForPost((m) => m.type === 'requestRows');
      assert.equal(req.start, 0);
      assert.ok(req.count > 0 && req.count <= 200, `page size ${req.count}`);
      await waitLoaded(view.page);
      const rows = await visibleRows(view.page);
      assert.ok(rows.length >= 20, `expected a screenful of rows, got ${rows.length}`);
      assert.equal(rows[0].entry, 0);
      for (const r of rows) {
        const want = rowFor(r.entry);
        assert.equal(r.place, want.place);
        assert.equal(r.tokens, want.tokens === null ? '' : fmt(want.tokens));
        assert.equal(r.record, fmt(want.record + 1));
        assert.equal(r.id, want.cells.id);
      }
      // Only visible rows plus a small overscan are in the DOM, not the shard.
      const inDom = (await renderedRows(view.page)).length;
      assert.ok(inDom < 80, `${inDom} rows in the DOM`);
      const spacer = await view.page.$eval('.sw-spacer', (s) => s.getBoundingClientRect().height);
      assert.equal(spacer, 100_000 * ROW_HEIGHT);
      assert.match(await view.page.textContent('.sw-entries'), /100,000/);
      await screenshot(view.page, 'record-view-table-dark');
      assert.deepEqual(view.errors, []);
    } finally {
      await view.close();
    }
  });

  test('scrolling to the middle requests the page holding that entry and renders it', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(100_000));
      await waitLoaded(view.page);
      const before = view.posted.length;
      await view.page.$eval('.sw-viewport', (v, y) => (v.scrollTop = y), 50_000 * ROW_HEIGHT);
      const req = await view.waitForPost((m) => m.type === 'requestRows' && m.start > 0, { from: before });
      assert.equal(req.start % PAGE, 0);
      assert.ok(req.start <= 50_000 && 50_000 < req.start + PAGE + 64, `asked for ${req.start}`);
      await waitLoaded(view.page);
      const rows = await visibleRows(view.page);
      assert.equal(rows[0].entry, 50_000);
      for (const r of rows) assert.equal(r.place, rowFor(r.entry).place);
    } finally {
      await view.close();
    }
  });

  test('scales the scroll range for millions of entries and still reaches the last one', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      const n = 5_000_000;
      await view.send(initMessage(n));
      await waitLoaded(view.page);
      // Chromium stops laying out elements past ~16.7 M px (common practice: keep spacers far below that).
      const spacer = await view.page.$eval('.sw-spacer', (s) => s.getBoundingClientRect().height);
      assert.ok(spacer < 16_000_000, `spacer ${spacer}px`);
      await view.page.$eval('.sw-viewport', (v) => (v.scrollTop = v.scrollHeight));
      // Rendering follows on the next frame: wait for the last row itself, not just any loaded rows.
      await view.page.waitForSelector(`.sw-rows .sw-row[data-entry="${n - 1}"]:not(.sw-row-loading)`);
      await waitLoaded(view.page);
      const rows = await visibleRows(view.page);
      assert.equal(rows.at(-1).entry, n - 1);
      assert.equal(rows.at(-1).place, rowFor(n - 1).place);
      // A host selection deep inside the scaled range lands on the right row, in view.
      await view.send({ type: 'select', entry: 2_500_000 });
      await view.page.waitForSelector('.sw-rows .sw-row.sw-selected[data-entry="2500000"]:not(.sw-row-loading)');
      await waitLoaded(view.page);
      const sel = (await visibleRows(view.page)).filter((r) => r.selected);
      assert.deepEqual(sel.map((r) => [r.entry, r.place]), [[2_500_000, rowFor(2_500_000).place]]);
      await view.page.focus('.sw-viewport');
      await view.page.keyboard.press('ArrowDown');
      await view.page.waitForSelector('.sw-rows .sw-row.sw-selected[data-entry="2500001"]:not(.sw-row-loading)');
      await waitLoaded(view.page);
      const sel2 = (await visibleRows(view.page)).filter((r) => r.selected);
      assert.deepEqual(sel2.map((r) => r.entry), [2_500_001]);
    } finally {
      await view.close();
    }
  });

  test('answers to unknown or superseded requests are ignored', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView' });
    try {
      await view.send(initMessage(1000));
      const req = await view.waitForPost((m) => m.type === 'requestRows');
      // A reply to a request never made must not fill the table.
      const bogus = rowsAnswer({ requestId: req.requestId + 1000, start: 0, count: 50 });
      bogus.rows.forEach((r) => (r.place = 'stale'));
      await view.send(bogus);
      // A reload (a second init) supersedes the first request; its late answer is dropped too.
      await view.send(initMessage(1000, { fileName: 'reloaded.jsonl' }));
      const req2 = await view.waitForPost((m) => m.type === 'requestRows' && m.requestId !== req.requestId);
      const late = rowsAnswer(req);
      late.rows.forEach((r) => (r.place = 'stale'));
      await view.send(late);
      await view.send(rowsAnswer(req2));
      await waitLoaded(view.page);
      const rows = await visibleRows(view.page);
      assert.ok(rows.length > 0);
      for (const r of rows) assert.equal(r.place, rowFor(r.entry).place);
    } finally {
      await view.close();
    }
  });

  test('keyboard: arrows, PageDown, End and Home move the selection and post it', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(100_000));
      await waitLoaded(view.page);
      await view.page.click('.sw-rows .sw-row[data-entry="2"]');
      let mark = view.posted.length;
      assert.deepEqual(await view.waitForPost((m) => m.type === 'selected'), { type: 'selected', entry: 2 });
      await view.waitForPost((m) => m.type === 'requestDetail' && m.entry === 2);

      mark = view.posted.length;
      await view.page.keyboard.press('ArrowDown');
      assert.equal((await view.waitForPost((m) => m.type === 'selected', { from: mark })).entry, 3);
      await view.waitForPost((m) => m.type === 'requestDetail' && m.entry === 3, { from: mark });

      mark = view.posted.length;
      await view.page.keyboard.press('ArrowUp');
      assert.equal((await view.waitForPost((m) => m.type === 'selected', { from: mark })).entry, 2);

      const pageRows = Math.floor((await view.page.$eval('.sw-viewport', (v) => v.clientHeight)) / ROW_HEIGHT);
      mark = view.posted.length;
      await view.page.keyboard.press('PageDown');
      assert.equal((await view.waitForPost((m) => m.type === 'selected', { from: mark })).entry, 2 + pageRows);

      mark = view.posted.length;
      await view.page.keyboard.press('End');
      assert.equal((await view.waitForPost((m) => m.type === 'selected', { from: mark })).entry, 99_999);
      await waitLoaded(view.page);
      const sel = (await visibleRows(view.page)).filter((r) => r.selected);
      assert.deepEqual(sel.map((r) => r.entry), [99_999]);

      mark = view.posted.length;
      await view.page.keyboard.press('Home');
      assert.equal((await view.waitForPost((m) => m.type === 'selected', { from: mark })).entry, 0);

      // Enter opens the detail pane and moves focus into it.
      await view.page.click('.sw-detail-close');
      assert.equal(await view.page.isHidden('.sw-detail'), true);
      await view.page.focus('.sw-viewport');
      await view.page.keyboard.press('Enter');
      await view.page.waitForSelector('.sw-detail', { state: 'visible' });
      assert.ok(await view.page.evaluate(() => document.querySelector('.sw-detail').contains(document.activeElement)));
    } finally {
      await view.close();
    }
  });

  test('go to posts what was typed for the host to read, and shows the host’s answer when it is no place', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(100_000));
      for (const text of ['12', 'line 40', 'L40', 'row 7']) {
        const mark = view.posted.length;
        await view.page.fill('.sw-goto-input', text);
        await view.page.press('.sw-goto-input', 'Enter');
        // One parser, in the host, serves the palette and this box (engine/places.ts).
        assert.deepEqual(await view.waitForPost((m) => m.type === 'goto', { from: mark }), { type: 'goto', text }, text);
        assert.equal(await view.page.$eval('.sw-goto-input', (i) => i.classList.contains('sw-invalid')), false);
      }
      await view.send({ type: 'gotoInvalid', message: 'There is no record 200000 (the shard has 100,000 records).' });
      assert.equal(await view.page.$eval('.sw-goto-input', (i) => i.classList.contains('sw-invalid')), true);
      assert.equal(await view.page.getAttribute('.sw-goto-input', 'aria-invalid'), 'true');
      assert.equal(await view.page.textContent('.sw-goto-hint'), 'There is no record 200000 (the shard has 100,000 records).');
      // Typing again clears the mark; an empty box posts nothing.
      await view.page.fill('.sw-goto-input', '');
      assert.equal(await view.page.$eval('.sw-goto-input', (i) => i.classList.contains('sw-invalid')), false);
      const mark = view.posted.length;
      await view.page.press('.sw-goto-input', 'Enter');
      await view.page.evaluate(() => new Promise((r) => requestAnimationFrame(() => r(null))));
      assert.equal(view.posted.slice(mark).filter((m) => m.type === 'goto').length, 0);
    } finally {
      await view.close();
    }
  });

  test('the detail shows the conversation turns with their roles and token counts', async () => {
    for (const theme of ['dark', 'light']) {
      const view = await openView(env.browser, env.server, { kind: 'recordView', theme, onMessage: scriptedHost() });
      try {
        await view.send(initMessage(100_000));
        await waitLoaded(view.page);
        await view.page.click('.sw-rows .sw-row[data-entry="7"]');
        await view.page.waitForSelector('.sw-turn');
        const turns = await view.page.$$eval('.sw-turn', (ts) =>
          ts.map((t) => ({
            role: t.querySelector('.sw-role').textContent,
            dataRole: t.dataset.role,
            tokens: t.querySelector('.sw-turn-tokens')?.textContent,
            content: t.querySelector('.sw-turn-content').textContent,
          })),
        );
        const want = chatDetail(7).turns;
        assert.equal(turns.length, want.length);
        turns.forEach((t, i) => {
          assert.equal(t.role, want[i].role);
          assert.equal(t.dataRole, want[i].role);
          assert.equal(t.tokens, `${want[i].tokens} tokens`);
          assert.equal(t.content, want[i].content);
        });
        // Role colours come from theme variables: user and assistant turns must differ.
        const colours = await view.page.$$eval('.sw-turn', (ts) => ts.map((t) => getComputedStyle(t).borderLeftColor));
        assert.notEqual(colours[1], colours[2]);
        assert.match(await view.page.textContent('.sw-detail-tokens'), /56 tokens/);
        await screenshot(view.page, `record-view-conversation-${theme}`);

        // The open-at-line button posts openText for the record.
        let mark = view.posted.length;
        await view.page.click('.sw-open-line');
        assert.deepEqual(await view.waitForPost((m) => m.type === 'openText', { from: mark }), { type: 'openText', entry: 7 });

        // A finding of the record opens the text at its pointer.
        await view.page.click('.sw-tab[data-tab="findings"]');
        mark = view.posted.length;
        await view.page.click('.sw-detail-finding[data-id="41"]');
        assert.deepEqual(await view.waitForPost((m) => m.type === 'openText', { from: mark }), {
          type: 'openText',
          entry: 7,
          pointer: '/messages/3',
        });
        await view.page.click('.sw-tab[data-tab="json"]');
        await screenshot(view.page, `record-view-json-${theme}`);
        assert.deepEqual(view.errors, []);
      } finally {
        await view.close();
      }
    }
  });

  test('a host select with a pointer scrolls to the entry and highlights that JSON node', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(100_000));
      await waitLoaded(view.page);
      const mark = view.posted.length;
      // RFC 6901 §3: '/' in a key is written '~1' and '~' is written '~0'.
      const pointer = '/a~1b~0c/nested/2/deep';
      await view.send({ type: 'select', entry: 70_000, pointer });
      const req = await view.waitForPost((m) => m.type === 'requestDetail', { from: mark });
      assert.deepEqual(req, { type: 'requestDetail', entry: 70_000, reveal: pointer });
      await view.page.waitForSelector('.sw-node-revealed');
      const revealed = await view.page.$$eval('.sw-node-revealed', (ns) => ns.map((n) => n.dataset.pointer));
      assert.deepEqual(revealed, [pointer]);
      // The key shown is the unescaped one (RFC 6901 §4).
      assert.equal(await view.page.$eval('.sw-node[data-pointer="/a~1b~0c"] > .sw-node-line > .sw-key', (k) => k.textContent), 'a/b~c');
      assert.equal(await view.page.$eval('.sw-tab-active', (t) => t.dataset.tab), 'json');
      await waitLoaded(view.page);
      const sel = (await visibleRows(view.page)).filter((r) => r.selected).map((r) => r.entry);
      assert.deepEqual(sel, [70_000]);
      const inView = await view.page.$eval('.sw-node-revealed', (n) => {
        const r = n.getBoundingClientRect();
        const b = document.querySelector('.sw-tab-body').getBoundingClientRect();
        return r.top >= b.top && r.bottom <= b.bottom;
      });
      assert.ok(inView, 'the revealed node is scrolled into view');
      await screenshot(view.page, 'record-view-reveal-dark');
      // A pointer below what the tree shows falls back to its nearest shown ancestor.
      await view.send({ type: 'select', entry: 70_001, pointer: '/messages/9/content' });
      await view.page.waitForFunction(() => document.querySelector('.sw-detail')?.dataset.entry === '70001');
      await view.page.waitForSelector('.sw-node-revealed');
      assert.deepEqual(await view.page.$$eval('.sw-node-revealed', (ns) => ns.map((n) => n.dataset.pointer)), ['/messages']);
    } finally {
      await view.close();
    }
  });

  test('hostile record text shows as literal text and runs nothing, with no CSP violation needed', async () => {
    const hostileRow = (e) => ({
      ...rowFor(e),
      place: HOSTILE[0],
      cells: { id: HOSTILE[1], messages: HOSTILE[0], source: HOSTILE[2], [HOSTILE[1]]: 'x' },
    });
    const hostileDetail = (entry) => ({
      ...chatDetail(entry),
      place: HOSTILE[1],
      value: { [HOSTILE[0]]: HOSTILE[1], list: [HOSTILE[2]] },
      turns: HOSTILE.map((t, i) => ({
        index: i,
        role: t,
        content: t,
        tokens: 1,
        pointer: `/list/${i}`,
        answers: { id: t, name: t },
        parts: [
          { kind: 'text', text: t, pointer: `/list/${i}/content/0` },
          { kind: 'reasoning', text: t, pointer: `/list/${i}/reasoning` },
          { kind: 'tool-call', name: t, arguments: t, id: t, pointer: `/list/${i}/tool_calls/0` },
          { kind: 'media', media: t, chip: t, inline: false, pointer: `/list/${i}/content/1` },
          { kind: t, type: t, pointer: `/list/${i}/content/2` },
        ],
      })),
      pair: {
        prompt: { name: 'prompt', pointer: '/prompt', present: true, text: HOSTILE[0], turns: null, transcript: false, tokens: 3 },
        chosen: {
          name: 'chosen',
          pointer: '/chosen',
          present: true,
          text: null,
          turns: HOSTILE.map((t, i) => ({ index: i, role: t, content: t, tokens: 1, pointer: `/chosen/${i}`, answers: { id: t, name: t } })),
          transcript: false,
          tokens: 3,
        },
        rejected: { name: 'rejected', pointer: '/rejected', present: true, text: HOSTILE[2], turns: null, transcript: false, tokens: 1 },
        promptDiffers: 0,
      },
      layout: HOSTILE[1],
      media: [{ kind: 'media', media: 'image', chip: HOSTILE[1], inline: false, pointer: '/images/0' }],
      findings: [{ ...chatDetail(entry).findings[0], rule: HOSTILE[2], message: HOSTILE_TEXT, place: HOSTILE[0] }],
    });
    const view = await openView(env.browser, env.server, {
      kind: 'recordView',
      title: HOSTILE_TEXT,
      onMessage: async (m, v) => {
        if (m.type === 'requestRows') {
          const a = rowsAnswer(m);
          a.rows = a.rows.map((r) => hostileRow(r.entry));
          a.rows[1] = { ...a.rows[1], record: null, raw: HOSTILE_TEXT };
          await v.send(a);
        } else if (m.type === 'requestDetail') await v.send({ type: 'detail', detail: hostileDetail(m.entry) });
      },
    });
    try {
      await view.send(
        initMessage(500, {
          fileName: HOSTILE_TEXT,
          columns: [...initMessage(1).columns, { name: HOSTILE[1], type: HOSTILE[0] }],
          facts: { [HOSTILE[0]]: HOSTILE[1] },
        }),
      );
      await waitLoaded(view.page);
      await view.page.click('.sw-rows .sw-row[data-entry="0"]');
      await view.page.waitForSelector('.sw-turn');
      for (const tab of ['pair', 'json', 'findings', 'conversation']) await view.page.click(`.sw-tab[data-tab="${tab}"]`);
      await view.send({ type: 'error', message: HOSTILE_TEXT });
      await view.page.click('.sw-tab[data-tab="json"]');
      await view.page.waitForSelector('.sw-tree');
      await view.page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));

      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      // Nothing was parsed as markup: no element the host text names exists anywhere.
      assert.equal(await view.page.$$eval('img, svg, script:not([nonce])', (x) => x.length), 0);
      assert.equal(await view.page.textContent('.sw-file-name'), HOSTILE_TEXT);
      assert.equal(await view.page.textContent('.sw-rows .sw-row[data-entry="0"] [data-col="place"]'), HOSTILE[0]);
      assert.equal(await view.page.textContent('.sw-rows .sw-row[data-entry="0"] [data-field="id"]'), HOSTILE[1]);
      assert.equal(await view.page.textContent('.sw-rows .sw-row[data-entry="1"] [data-col="raw"]'), HOSTILE_TEXT);
      assert.equal(await view.page.textContent('.sw-banner-text'), HOSTILE_TEXT);
      const keys = await view.page.$$eval('.sw-key', (ks) => ks.map((k) => k.textContent));
      assert.ok(keys.includes(HOSTILE[0]));
      // The title went through the HTML shell's escaping (HTML Living Standard: text in <title> is RCDATA).
      assert.equal(await view.page.title(), HOSTILE_TEXT);
      // W3C CSP Level 3 §5.3: a blocked inline script raises securitypolicyviolation; escaping must make that unnecessary.
      assert.deepEqual(await view.cspViolations(), []);
      assert.deepEqual(view.errors, []);
      await screenshot(view.page, 'record-view-hostile-dark');
    } finally {
      await view.close();
    }
  });

  test('columnar header shows row groups and column types in the structure section', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', theme: 'light', onMessage: scriptedHost() });
    try {
      await view.send(
        initMessage(3000, {
          fileName: 'preference-pairs.parquet',
          format: 'parquet',
          columns: [
            { name: 'prompt', type: 'string' },
            { name: 'chosen', type: 'string' },
            { name: 'rejected', type: 'string' },
          ],
          groups: [
            { index: 0, rows: 2048, firstRow: 0, compressedBytes: 301_222, uncompressedBytes: 912_004, codecs: { prompt: 'ZSTD', chosen: 'ZSTD', rejected: 'ZSTD' } },
            { index: 1, rows: 952, firstRow: 2048, compressedBytes: 140_010, uncompressedBytes: 420_771, codecs: { prompt: 'ZSTD', chosen: 'ZSTD', rejected: 'SNAPPY' } },
          ],
          facts: { writer: 'workshop export 1.2' },
        }),
      );
      await view.page.click('.sw-structure-summary');
      const groups = await view.page.$$eval('.sw-groups-table tbody tr', (rs) => rs.map((r) => [...r.cells].map((c) => c.textContent)));
      assert.equal(groups.length, 2);
      assert.deepEqual(groups[1].slice(0, 3), ['1', '952', '2,048']);
      assert.equal(groups[1][5], 'ZSTD, SNAPPY');
      const cols = await view.page.$$eval('.sw-columns-table tbody tr', (rs) => rs.map((r) => r.dataset.column));
      assert.deepEqual(cols, ['prompt', 'chosen', 'rejected']);
      assert.match(await view.page.textContent('.sw-entries'), /3,000 rows/);
      await waitLoaded(view.page);
      await screenshot(view.page, 'record-view-structure-light');
    } finally {
      await view.close();
    }
  });

  test('the header shows the shard layout once the host names it, and how it was chosen', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', theme: 'dark', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(500, { fileName: 'preference-pairs.jsonl' }));
      assert.equal(await view.page.isHidden('.sw-layout'), true);
      await view.send({ type: 'layout', id: 'preference', share: 0.9876, chosen: false });
      await view.page.waitForSelector('.sw-layout', { state: 'visible' });
      assert.equal(await view.page.textContent('.sw-layout'), 'layout preference · 98.8% of records');
      assert.match(await view.page.getAttribute('.sw-layout', 'title'), /decided from the shard's first records/);
      await view.send({ type: 'layout', id: '<img src=x onerror=alert(1)>', share: 1, chosen: true });
      assert.equal(await view.page.textContent('.sw-layout'), 'layout <img src=x onerror=alert(1)> · 100% of records');
      assert.equal(await view.page.$$eval('.sw-layout img', (x) => x.length), 0);
      assert.match(await view.page.getAttribute('.sw-layout', 'title'), /as the settings or the project file say/);
    } finally {
      await view.close();
    }
  });

  test('search, sort and filter: the box, the Tokens header and the menus post queries; the host’s view shows as N of M', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(5000));
      await waitLoaded(view.page);
      // Ctrl+F opens search in the view.
      await view.page.click('.sw-viewport');
      await view.page.keyboard.press('Control+f');
      assert.equal(await view.page.evaluate(() => document.activeElement?.className), 'sw-search-input');
      let mark = view.posted.length;
      await view.page.keyboard.type('gear 7');
      await view.page.keyboard.press('Enter');
      assert.deepEqual(await view.waitForPost((m) => m.type === 'query', { from: mark }), { type: 'query', query: { search: { text: 'gear 7', regex: false, caseSensitive: false } } });
      // The case and regular-expression toggles are pressed buttons and re-run the search.
      mark = view.posted.length;
      await view.page.click('.sw-search-regex');
      assert.equal(await view.page.getAttribute('.sw-search-regex', 'aria-pressed'), 'true');
      assert.deepEqual((await view.waitForPost((m) => m.type === 'query', { from: mark })).query.search, { text: 'gear 7', regex: true, caseSensitive: false });
      // The host answers with its view: progress first, then the matching records.
      await view.send({ type: 'view', active: false, count: 5000, total: 5000, label: '', query: null, searching: 0.4 });
      assert.match(await view.page.textContent('.sw-view-chip'), /searching 40%/);
      // (The scripted host's rows all hold "my chain skips": the view the host sends searches for "chain".)
      const q = { search: { text: 'cha.n', regex: true, caseSensitive: false } };
      await view.send({ type: 'view', active: true, count: 3, total: 5000, label: 'pattern “cha.n”', query: q });
      assert.match(await view.page.textContent('.sw-view-chip'), /^3 recordspattern “cha.n”/);
      assert.equal(await view.page.textContent('.sw-entries'), '3 of 5,000 lines');
      await waitLoaded(view.page);
      assert.equal((await renderedRows(view.page)).length, 3);
      // Matches are marked in the cells, as text.
      assert.deepEqual([...new Set(await view.page.$$eval('mark.sw-match', (ms) => ms.map((m) => m.textContent)))], ['chain']);
      // Enter on the search the view shows steps through its matching records.
      await view.page.fill('.sw-search-input', 'cha.n');
      await view.page.focus('.sw-search-input');
      const selectedIs = (n) => view.page.waitForFunction((k) => document.querySelector('.sw-rows .sw-row.sw-selected')?.dataset.entry === String(k), n);
      await view.page.keyboard.press('Enter');
      await selectedIs(0);
      await view.page.keyboard.press('Enter');
      await selectedIs(1);
      // The Tokens header sorts: most first, then fewest first, then file order.
      mark = view.posted.length;
      await view.page.click('.sw-row-head [data-col="tokens"]');
      assert.deepEqual((await view.waitForPost((m) => m.type === 'query', { from: mark })).query.sort, { key: 'tokens', descending: true });
      await view.send({ type: 'view', active: true, count: 3, total: 5000, label: 'sorted', query: { ...q, sort: { key: 'tokens', descending: true } } });
      assert.equal(await view.page.getAttribute('.sw-row-head [data-col="tokens"]', 'aria-sort'), 'descending');
      assert.equal(await view.page.inputValue('.sw-sort'), 'tokens:desc');
      // A quick filter from the menu; "a rule…" asks the host to pick one.
      mark = view.posted.length;
      await view.page.selectOption('.sw-filter', 'severity:error');
      assert.deepEqual((await view.waitForPost((m) => m.type === 'query', { from: mark })).query.filter, { kind: 'severity', severity: 'error' });
      mark = view.posted.length;
      await view.page.selectOption('.sw-filter', 'rule');
      await view.waitForPost((m) => m.type === 'pickRule', { from: mark });
      // F8 asks for the next record with a finding.
      mark = view.posted.length;
      await view.page.click('.sw-viewport');
      await view.page.keyboard.press('F8');
      // (A new view clears the selection: the step starts before the first record.)
      assert.deepEqual(await view.waitForPost((m) => m.type === 'step', { from: mark }), { type: 'step', direction: 1, from: -1 });
      // A bad pattern is the host's clear message beside the controls; clearing returns to file order.
      await view.send({ type: 'view', active: true, count: 3, total: 5000, label: '', query: q, error: 'not a regular expression: Unterminated group' });
      await view.page.waitForFunction(() => /not a regular expression/.test(document.querySelector('.sw-view-chip')?.textContent ?? ''));
      await view.send({ type: 'view', active: true, count: 3, total: 5000, label: 'pattern', query: q });
      mark = view.posted.length;
      await view.page.click('.sw-view-clear');
      assert.deepEqual(await view.waitForPost((m) => m.type === 'query', { from: mark }), { type: 'query', query: null });
      await view.send({ type: 'view', active: false, count: 5000, total: 5000, label: '', query: null });
      assert.equal(await view.page.textContent('.sw-entries'), '5,000 lines');
      assert.equal(await view.page.isHidden('.sw-view-chip'), true);
      // Rows carry their context for the row menu: the view position, and the cell's column.
      await waitLoaded(view.page);
      const ctx = await view.page.$eval('.sw-rows .sw-row[data-entry="0"] [data-field="source"]', (c) => JSON.parse(c.dataset.vscodeContext));
      assert.deepEqual(ctx, { webviewSection: 'cell', position: 0, column: 'source', preventDefaultContextMenuItems: true });
      await screenshot(view.page, 'record-view-search');
    } finally {
      await view.close();
    }
  });

  test('a hostile search text is marked as text and runs nothing', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(50));
      await waitLoaded(view.page);
      const text = '<img src=x onerror=window.__pwned=1>';
      await view.send({ type: 'view', active: true, count: 2, total: 50, label: `search “${text}”`, query: { search: { text, regex: false, caseSensitive: false } } });
      await waitLoaded(view.page);
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.equal(await view.page.$$eval('.sw-view-chip img', (x) => x.length), 0);
      assert.match(await view.page.textContent('.sw-view-chip'), /<img src=x onerror/);
    } finally {
      await view.close();
    }
  });

  test('accessibility: the grid, the detail tabs and the JSON tree follow the WAI-ARIA patterns, by keyboard alone', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(1000));
      await waitLoaded(view.page);
      // The grid: the whole count with the header row, each row's index, the selection announced.
      assert.equal(await view.page.getAttribute('.sw-viewport', 'role'), 'grid');
      assert.equal(await view.page.getAttribute('.sw-viewport', 'aria-rowcount'), '1001');
      assert.equal(await view.page.getAttribute('.sw-rows .sw-row[data-entry="3"]', 'aria-rowindex'), '5');
      await view.page.focus('.sw-viewport');
      await view.page.keyboard.press('ArrowDown');
      await view.page.keyboard.press('ArrowDown');
      await view.page.waitForFunction(() => document.querySelector('.sw-viewport')?.getAttribute('aria-activedescendant') === 'sw-row-1');
      assert.equal(await view.page.getAttribute('#sw-row-1', 'aria-selected'), 'true');
      // Tabs: arrows move and select; the panel is labelled by its tab.
      await view.page.waitForSelector('.sw-tab[aria-selected="true"]');
      const first = await view.page.getAttribute('.sw-tab[aria-selected="true"]', 'data-tab');
      await view.page.focus('.sw-tab[aria-selected="true"]');
      await view.page.keyboard.press('End');
      const last = await view.page.$$eval('.sw-tab', (ts) => ts[ts.length - 1].dataset.tab);
      assert.equal(await view.page.getAttribute('.sw-tab[aria-selected="true"]', 'data-tab'), last);
      assert.equal(await view.page.evaluate(() => document.activeElement?.getAttribute('role')), 'tab');
      assert.equal(await view.page.getAttribute('#sw-tab-panel', 'aria-labelledby'), `sw-tab-${last}`);
      await view.page.keyboard.press('Home');
      assert.equal(await view.page.getAttribute('.sw-tab[aria-selected="true"]', 'data-tab'), first);
      // The JSON tree: levels and open state; Left closes, Right opens, Down moves.
      await view.page.click('.sw-tab[data-tab="json"]');
      await view.page.focus('.sw-tree [role="treeitem"][aria-level="1"]');
      assert.equal(await view.page.getAttribute('.sw-tree [aria-level="1"]', 'aria-expanded'), 'true');
      await view.page.keyboard.press('ArrowDown');
      assert.equal(await view.page.evaluate(() => document.activeElement?.getAttribute('aria-level')), '2');
      await view.page.keyboard.press('ArrowLeft');
      assert.equal(await view.page.evaluate(() => document.activeElement?.getAttribute('aria-level')), '1');
      await view.page.keyboard.press('ArrowLeft');
      assert.equal(await view.page.getAttribute('.sw-tree [aria-level="1"]', 'aria-expanded'), 'false');
      await view.page.keyboard.press('ArrowRight');
      assert.equal(await view.page.getAttribute('.sw-tree [aria-level="1"]', 'aria-expanded'), 'true');
      // The splitter is focusable and moves with the keyboard.
      const before = await view.page.$eval('.sw-detail', (d) => d.getBoundingClientRect().width + d.getBoundingClientRect().height);
      await view.page.focus('.sw-splitter');
      await view.page.keyboard.press('ArrowLeft');
      await view.page.keyboard.press('ArrowUp');
      const after = await view.page.$eval('.sw-detail', (d) => d.getBoundingClientRect().width + d.getBoundingClientRect().height);
      assert.ok(after > before, `the detail pane did not grow (${before} → ${after})`);
      // Chromium's accessibility tree (playwright's ARIA snapshot) holds the roles with their names.
      const tree = await view.page.locator('body').ariaSnapshot();
      for (const want of [/- grid/, /- '?row "/, /- columnheader "Tokens"/, /- tablist/, /- '?tab "/, /- tabpanel/, /- tree:/, /- '?treeitem "/, /- search/, /- textbox "Go to record, line or row"/]) assert.match(tree, want);
    } finally {
      await view.close();
    }
  });

  test('themes: light, dark and both high-contrast themes; high contrast marks the selected row and the active tab with its active border', async () => {
    for (const theme of ['light', 'dark', 'hc-dark', 'hc-light']) {
      const view = await openView(env.browser, env.server, { kind: 'recordView', theme, onMessage: scriptedHost() });
      try {
        await view.send(initMessage(400));
        await waitLoaded(view.page);
        await view.page.focus('.sw-viewport');
        await view.page.keyboard.press('ArrowDown');
        await view.page.waitForSelector('.sw-rows .sw-row.sw-selected');
        await view.page.waitForSelector('.sw-tab-active');
        const style = await view.page.$eval('.sw-rows .sw-row.sw-selected', (r) => ({ color: getComputedStyle(r).outlineColor, width: getComputedStyle(r).outlineWidth, style: getComputedStyle(r).outlineStyle }));
        const tab = await view.page.$eval('.sw-tab-active', (t) => getComputedStyle(t).outlineColor);
        if (theme === 'hc-dark') {
          assert.equal(style.color, 'rgb(243, 133, 24)');
          assert.equal(tab, 'rgb(243, 133, 24)');
        } else if (theme === 'hc-light') {
          assert.equal(style.color, 'rgb(0, 107, 189)');
        }
        await screenshot(view.page, `record-view-theme-${theme}`);
      } finally {
        await view.close();
      }
      const panel = await openView(env.browser, env.server, { kind: 'panel', theme });
      try {
        const { panelState } = await import('./fixtures.mjs');
        await panel.send(panelState());
        await panel.page.waitForSelector('.sw-finding');
        await screenshot(panel.page, `panel-theme-${theme}`);
      } finally {
        await panel.close();
      }
    }
  });

  test('records that try to run, restyle or reorder: nothing runs, nothing is restyled, every character shows', async () => {
    const payloads = {
      script: '<script>window.__pwned = 1</script>',
      handler: '<b onmouseover="window.__pwned = 2">hover</b>',
      link: '<a href="javascript:window.__pwned=3">click</a>',
      css: '</style><style>body { display: none !important }</style><div style="position:fixed;inset:0;background:red">',
      bidi: 'admin\u202E\u2066 // check later \u2069\u2066',
      control: 'bell\u0007 null\u0000 escape\u001b[31m end',
    };
    const value = { id: 'hostile', ...payloads, messages: [{ role: 'user', content: payloads.bidi }, { role: 'assistant', content: payloads.control }] };
    const host = scriptedHost({
      detailFor: (entry) =>
        chatDetail(entry, {
          value,
          turns: [
            { index: 0, role: 'user', content: payloads.bidi, tokens: 9, pointer: '/messages/0' },
            { index: 1, role: 'assistant', content: payloads.control, tokens: 9, pointer: '/messages/1' },
          ],
        }),
    });
    const view = await openView(env.browser, env.server, {
      kind: 'recordView',
      onMessage: async (m, v) => {
        if (m.type === 'requestRows') {
          const rows = [];
          for (let e = m.start; e < m.start + m.count; e++) rows.push({ ...rowFor(e), cells: { id: payloads.bidi, messages: payloads.css, source: payloads.control } });
          await v.send({ type: 'rows', requestId: m.requestId, start: m.start, rows });
        } else await host(m, v);
      },
    });
    try {
      await view.send(initMessage(20));
      await waitLoaded(view.page);
      await view.page.hover('.sw-rows .sw-row[data-entry="0"]');
      await view.page.click('.sw-rows .sw-row[data-entry="0"]');
      await view.page.waitForSelector('.sw-turn');
      const turns = await view.page.$$eval('.sw-turn-content', (ts) => ts.map((t) => t.textContent));
      await view.page.click('.sw-tab[data-tab="json"]');
      await view.page.waitForSelector('.sw-tree');
      for (const el of await view.page.$$('.sw-tree .sw-value')) await el.hover().catch(() => undefined);
      await view.page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
      // Nothing ran, nothing was blocked because it tried (no element was made to try), nothing restyled the page.
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.deepEqual(await view.cspViolations(), []);
      assert.equal(await view.page.$$eval('script:not([nonce]), style:not([nonce]), a[href^="javascript"], b[onmouseover], [style*="position:fixed"]', (x) => x.length), 0);
      assert.notEqual(await view.page.evaluate(() => getComputedStyle(document.body).display), 'none');
      // The text shows as written, the markup as characters; bidi and control characters as visible marks.
      const tree = await view.page.textContent('.sw-tree');
      for (const k of ['script', 'handler', 'link', 'css']) assert.ok(tree.includes(JSON.stringify(payloads[k])), k);
      assert.match(tree, /⟨U\+202E⟩⟨U\+2066⟩ \/\/ check later ⟨U\+2069⟩⟨U\+2066⟩/);
      assert.equal(turns[0], 'admin⟨U+202E⟩⟨U+2066⟩ // check later ⟨U+2069⟩⟨U+2066⟩');
      assert.equal(turns[1], 'bell⟨U+0007⟩ null⟨U+0000⟩ escape⟨U+001B⟩[31m end');
      const cell = await view.page.textContent('.sw-rows .sw-row[data-entry="0"] [data-field="id"]');
      assert.equal(cell, 'admin⟨U+202E⟩⟨U+2066⟩ // check later ⟨U+2069⟩⟨U+2066⟩');
      await screenshot(view.page, 'record-view-hostile-characters');
    } finally {
      await view.close();
    }
  });

  test('indexing progress shows while the entry count grows, and new rows become reachable', async () => {
    const view = await openView(env.browser, env.server, { kind: 'recordView', onMessage: scriptedHost() });
    try {
      await view.send(initMessage(40, { complete: false }));
      await waitLoaded(view.page);
      assert.equal(await view.page.isVisible('.sw-indexing'), true);
      await view.send({ type: 'entries', entries: 60_000, complete: false, progress: 0.4 });
      assert.match(await view.page.textContent('.sw-indexing'), /40%/);
      const width = await view.page.$eval('.sw-indexing .sw-progress-fill', (f) => f.style.width);
      assert.equal(width, '40%');
      await view.send({ type: 'entries', entries: 150_000, complete: true, progress: 1 });
      assert.equal(await view.page.isHidden('.sw-indexing'), true);
      assert.match(await view.page.textContent('.sw-entries'), /150,000/);
      // The first page was answered when only 40 entries were known; it must be asked again for more
      // (the view waits for a pause before asking): wait until the viewport is full of loaded rows.
      await view.page.waitForFunction(() => {
        const box = document.querySelector('.sw-viewport').getBoundingClientRect();
        const shown = [...document.querySelectorAll('.sw-rows .sw-row[data-entry]')].filter((r) => {
          const b = r.getBoundingClientRect();
          return b.top >= box.top - 1 && b.bottom <= box.bottom + 1;
        });
        return shown.length > 20 && !document.querySelector('.sw-rows .sw-row-loading');
      });
      const rows = await visibleRows(view.page);
      assert.ok(rows.length > 20);
      for (const r of rows) assert.equal(r.place, rowFor(r.entry).place);
    } finally {
      await view.close();
    }
  });

  test('a tool-calling conversation shows the call, its arguments, the answer’s link, reasoning and the loss flag', async () => {
    const view = await openDetail((entry) => chatDetail(entry, { value: { messages: [] }, turns: TOOL_TURNS, tokens: 60 }));
    try {
      await view.page.waitForSelector('.sw-part-tool-call');
      const call = await view.page.$eval('.sw-part-tool-call', (c) => ({
        id: c.dataset.callId,
        name: c.querySelector('.sw-tool-name').textContent,
        callId: c.querySelector('.sw-call-id').textContent,
        args: c.querySelector('.sw-tool-args code').textContent,
      }));
      assert.deepEqual(call, { id: 'call_1', name: 'get_weather', callId: 'call_1', args: WEATHER_ARGS });
      const answers = await view.page.$$eval('.sw-answers', (as) => as.map((a) => a.textContent));
      assert.deepEqual(answers, ['answers call_1 · get_weather', 'answers call_9']);
      // Following the link marks the call it answers.
      await view.page.click('.sw-turn[data-turn="2"] .sw-answers');
      assert.equal(await view.page.$eval('.sw-part-tool-call', (c) => c.classList.contains('sw-part-flash')), true);
      // Reasoning is folded and says what it is.
      const reasoning = await view.page.$eval('.sw-part-reasoning', (d) => ({ open: d.open, head: d.querySelector('summary').textContent, text: d.querySelector('.sw-part-reasoning-text').textContent }));
      assert.deepEqual(reasoning, { open: false, head: 'Reasoning', text: 'The rider asks about rain: check the forecast.' });
      // The turn excluded from the loss is marked, and only that one.
      assert.deepEqual(await view.page.$$eval('.sw-turn-untrained', (ts) => ts.map((t) => t.dataset.turn)), ['4']);
      assert.match(await view.page.textContent('.sw-turn[data-turn="4"] .sw-untrained-tag'), /not trained on/);
      await screenshot(view.page, 'record-view-tool-calls-dark');
      assert.deepEqual(view.errors, []);
      assert.deepEqual(await view.cspViolations(), []);
    } finally {
      await view.close();
    }
  });

  test('a tiny inline PNG shows as an image with a data: source and no CSP violation', async () => {
    const png = tinyPng();
    const src = `data:image/png;base64,${png.toString('base64')}`;
    const view = await openDetail((entry) =>
      chatDetail(entry, {
        turns: [
          {
            index: 0,
            role: 'user',
            content: 'Is this chainring worn?',
            tokens: 9,
            pointer: '/messages/0',
            parts: [
              { kind: 'text', text: 'Is this chainring worn?', pointer: '/messages/0/content/0' },
              { kind: 'media', media: 'image', chip: `image/png, ${png.length} B`, inline: true, src, pointer: '/messages/0/content/1' },
            ],
          },
        ],
      }),
    );
    try {
      await view.page.waitForSelector('.sw-thumb-image');
      await view.page.waitForFunction(() => document.querySelector('.sw-thumb-image').complete);
      const img = await view.page.$eval('.sw-thumb-image', (i) => ({ src: i.getAttribute('src'), w: i.naturalWidth, h: i.naturalHeight }));
      assert.equal(img.src, src);
      // Chromium's own PNG decoder is the check that the bytes are a PNG: it reports their size.
      assert.deepEqual([img.w, img.h], [2, 2]);
      assert.deepEqual(await view.cspViolations(), []);
      assert.deepEqual(view.errors, []);
    } finally {
      await view.close();
    }
  });

  test('a javascript: or http: image location, or a bad source, is a chip and is never loaded', async () => {
    const requested = [];
    const locations = ['javascript:window.__pwned=1', 'http://127.0.0.1:9/cassette.png', 'images/0042.jpg'];
    const badSources = [
      'javascript:window.__pwned=1',
      'http://127.0.0.1:9/cassette.png',
      'data:image/svg+xml;base64,PHN2ZyBvbmxvYWQ9IndpbmRvdy5fX3B3bmVkPTEiLz4=',
      'data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==',
      'data:image/png;base64,iVBORw0KGgo=" onerror="window.__pwned=1',
    ];
    const parts = [
      ...locations.map((chip, i) => ({ kind: 'media', media: 'image', chip, inline: false, pointer: `/messages/0/content/${i}` })),
      ...badSources.map((src, i) => ({ kind: 'media', media: 'image', chip: 'image, not shown', inline: true, src, pointer: `/images/${i}` })),
    ];
    const onRequest = (r) => requested.push(r.url());
    const view = await openDetail(
      (entry) => chatDetail(entry, { turns: [{ index: 0, role: 'user', content: '', tokens: 1, pointer: '/messages/0', parts }] }),
      (page) => page.on('request', onRequest),
    );
    try {
      await view.page.waitForSelector('.sw-part-media');
      // Two frames rendered since the detail: layout and paint, where an image would start to load, are done.
      await view.page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
      assert.equal(await view.page.$$eval('.sw-detail img', (x) => x.length), 0);
      const chips = await view.page.$$eval('.sw-part-media.sw-chip', (cs) =>
        cs.map((c) => ({ text: c.querySelector('.sw-chip-text').textContent, link: !!c.querySelector('.codicon-link'), file: !!c.querySelector('.codicon-file') })),
      );
      assert.equal(chips.length, locations.length + badSources.length);
      assert.deepEqual(chips.slice(0, 3), [
        { text: locations[0], link: true, file: false },
        { text: locations[1], link: true, file: false },
        { text: locations[2], link: false, file: true },
      ]);
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.deepEqual(requested.filter((u) => /cassette|127\.0\.0\.1:9/.test(u)), []);
      assert.deepEqual(await view.cspViolations(), []);
      assert.deepEqual(view.errors, []);
    } finally {
      view.page.off('request', onRequest);
      await view.close();
    }
  });

  test('a pair whose prompts differ marks the first differing turn on both sides, with roles and token counts', async () => {
    const view = await openDetail((entry) => chatDetail(entry, { turns: undefined, pair: DIFFERING_PAIR, layout: 'preference' }));
    try {
      await view.page.waitForSelector('.sw-tab[data-tab="pair"]');
      await view.page.click('.sw-tab[data-tab="pair"]');
      await view.page.waitForSelector('.sw-pair-differs');
      assert.match(await view.page.textContent('.sw-pair-differs'), /from turn 3 on/);
      const marked = await view.page.$$eval('.sw-turn-differs', (ts) => ts.map((t) => [t.closest('.sw-pair-side').classList.contains('sw-pair-chosen') ? 'chosen' : 'rejected', t.dataset.turn]));
      assert.deepEqual(marked, [
        ['chosen', '2'],
        ['rejected', '2'],
      ]);
      const sides = await view.page.$$eval('.sw-pair-side', (ss) =>
        ss.map((s) => ({
          tokens: s.querySelector('.sw-pair-tokens')?.textContent,
          roles: [...s.querySelectorAll('.sw-turn .sw-role')].map((r) => r.textContent),
          text: s.querySelector('.sw-pair-text')?.textContent,
        })),
      );
      assert.deepEqual(sides, [
        { tokens: '6 tokens', roles: [], text: 'You are the workshop’s repair desk.' },
        { tokens: '31 tokens', roles: ['user', 'assistant', 'user', 'assistant'], text: undefined },
        { tokens: '27 tokens', roles: ['user', 'assistant', 'user', 'assistant'], text: undefined },
      ]);
      assert.equal(await view.page.textContent('.sw-detail-layout'), 'preference');
      await screenshot(view.page, 'record-view-pair-differs-dark');
      assert.deepEqual(view.errors, []);
    } finally {
      await view.close();
    }
  });

  test('a tool argument holding markup shows as text and runs nothing', async () => {
    const args = '{\n  "q": "<script>window.__pwned=1</script>",\n  "img": "<img src=x onerror=\\"window.__pwned=1\\">"\n}';
    const turns = [
      {
        index: 0,
        role: 'assistant',
        content: '',
        tokens: 20,
        pointer: '/messages/0',
        parts: [{ kind: 'tool-call', name: '<b>search</b>', arguments: args, id: '<i>c</i>', pointer: '/messages/0/tool_calls/0' }],
      },
    ];
    const view = await openDetail((entry) => chatDetail(entry, { turns }));
    try {
      await view.page.waitForSelector('.sw-tool-args');
      assert.equal(await view.page.textContent('.sw-tool-args'), args);
      assert.equal(await view.page.textContent('.sw-tool-name'), '<b>search</b>');
      assert.equal(await view.page.$$eval('.sw-detail script, .sw-detail img, .sw-detail b, .sw-detail i', (x) => x.length), 0);
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.deepEqual(await view.cspViolations(), []);
    } finally {
      await view.close();
    }
  });

  test('the JSON tree writes null as null', async () => {
    const view = await openDetail((entry) => chatDetail(entry, { value: { reply: null, name: 'null', count: 0, empty: '' } }));
    try {
      await view.page.click('.sw-tab[data-tab="json"]');
      const values = await view.page.$$eval('.sw-node[data-pointer^="/"] .sw-value', (vs) => vs.map((v) => [v.closest('.sw-node').dataset.pointer, v.textContent, v.className]));
      assert.deepEqual(values, [
        ['/reply', 'null', 'sw-value sw-t-null'],
        ['/name', '"null"', 'sw-value sw-t-string'],
        ['/count', '0', 'sw-value sw-t-number'],
        ['/empty', '""', 'sw-value sw-t-string'],
      ]);
    } finally {
      await view.close();
    }
  });
});
