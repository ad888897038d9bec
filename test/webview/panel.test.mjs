// The side panel in headless Chromium, driven by a scripted host over the protocol.
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { openView, screenshot, useBrowser } from './harness.mjs';
import { finding, HOSTILE, HOSTILE_TEXT, panelState } from './fixtures.mjs';

const env = useBrowser();

const PANEL_VIEWPORT = { width: 360, height: 720 };
const ids = (page) => page.$$eval('.sw-findings .sw-finding', (fs) => fs.map((f) => Number(f.dataset.id)));

describe('side panel', () => {
  test('empty state shows the host message', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT });
    try {
      await view.send({ type: 'empty', message: 'Open a JSONL, Parquet or Arrow shard to check it.' });
      assert.equal(await view.page.textContent('.sw-empty-text'), 'Open a JSONL, Parquet or Arrow shard to check it.');
      assert.equal(await view.page.isHidden('.sw-summary'), true);
    } finally {
      await view.close();
    }
  });

  test('summary shows the counts, token percentiles and the context overflow', async () => {
    for (const theme of ['dark', 'light']) {
      const view = await openView(env.browser, env.server, { kind: 'panel', theme, viewport: PANEL_VIEWPORT });
      try {
        const state = panelState();
        await view.send(state);
        const stat = (k) => view.page.textContent(`[data-stat="${k}"] .sw-stat-value`);
        assert.equal(await stat('records'), '5,117');
        assert.equal(await stat('blankLines'), '2');
        assert.equal(await stat('invalidLines'), '1');
        assert.equal(await stat('total'), '1,734,220');
        assert.equal(await stat('p50'), '302');
        assert.equal(await stat('p90'), '811');
        assert.equal(await stat('p99'), '2,402');
        assert.equal(await stat('max'), '9,210');
        assert.equal(await stat('prompt'), '602,118');
        assert.equal(await stat('response'), '1,132,102');
        assert.equal(await view.page.textContent('[data-stat="layout"] .sw-layout-id'), 'turns');
        assert.match(await view.page.textContent('[data-stat="layout"]'), /99\.8% of records/);
        assert.equal(await view.page.textContent('[data-stat="overContext"]'), 'Over 8,192 tokens: 3 records');
        assert.equal(await view.page.textContent('.sw-encoding'), 'cl100k_base');
        assert.deepEqual(await ids(view.page), [1, 2, 4, 3]);
        assert.equal(await view.page.isHidden('.sw-capped'), true);
        await screenshot(view.page, `panel-${theme}`);
        assert.deepEqual(view.errors, []);
      } finally {
        await view.close();
      }
    }
  });

  test('a progress bar shows while analysing and the error text when the run failed', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT });
    try {
      const s = panelState();
      await view.send({ ...s, summary: { ...s.summary, phase: 'analysing', progress: 0.25 } });
      assert.equal(await view.page.$eval('.sw-summary .sw-progress-fill', (f) => f.style.width), '25%');
      await view.send({ ...s, summary: { ...s.summary, phase: 'failed', progress: 0.3, error: 'The Parquet footer is cut short' } });
      assert.equal(await view.page.$$eval('.sw-summary .sw-progress', (x) => x.length), 0);
      assert.equal(await view.page.textContent('.sw-summary .sw-banner-text'), 'The Parquet footer is cut short');
    } finally {
      await view.close();
    }
  });

  test('clicking a finding posts reveal with its id; Enter does the same; the open action posts openText', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT });
    try {
      await view.send(panelState());
      let mark = view.posted.length;
      await view.page.click('.sw-finding[data-id="2"] .sw-message');
      assert.deepEqual(await view.waitForPost((m) => m.type !== 'ready', { from: mark }), { type: 'reveal', id: 2 });

      mark = view.posted.length;
      await view.page.focus('.sw-finding[data-id="1"]');
      // The list is one tab stop (a roving tab index); arrows walk findings and their rule headings.
      assert.equal(await view.page.$$eval('.sw-findings [tabindex="0"]', (x) => x.length), 1);
      await view.page.keyboard.press('ArrowDown'); // the heading of chat-role-repeated
      await view.page.keyboard.press('ArrowDown'); // its finding, id 2
      assert.deepEqual(await view.page.$$eval('.sw-findings [tabindex="0"]', (x) => x.map((e) => e.dataset.id)), ['2']);
      await view.page.keyboard.press('Enter');
      assert.deepEqual(await view.waitForPost((m) => m.type !== 'ready', { from: mark }), { type: 'reveal', id: 2 });
      // A heading closes with ArrowLeft and its findings leave the list; ArrowRight opens it again.
      await view.page.focus('.sw-group-head[data-rule="line-blank"]');
      await view.page.keyboard.press('ArrowLeft');
      assert.deepEqual(await ids(view.page), [1, 2, 3]);
      await view.page.keyboard.press('ArrowRight');
      assert.deepEqual(await ids(view.page), [1, 2, 4, 3]);

      mark = view.posted.length;
      await view.page.hover('.sw-finding[data-id="4"]');
      await view.page.click('.sw-finding[data-id="4"] .sw-open-text');
      // Exactly one message: the open action must not also reveal. A second, known action marks
      // the end (messages keep their order), instead of a sleep that proves nothing.
      await view.page.click('.sw-finding[data-id="1"] .sw-message');
      await view.waitForPost((m) => m.type === 'reveal' && m.id === 1, { from: mark });
      assert.deepEqual(view.posted.slice(mark), [{ type: 'openText', id: 4 }, { type: 'reveal', id: 1 }]);
    } finally {
      await view.close();
    }
  });

  test('severity and text filters narrow the list and survive a state update', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT });
    try {
      await view.send(panelState());
      await view.page.click('.sw-sev-toggle[data-severity="warning"]');
      assert.deepEqual(await ids(view.page), [1, 3]);
      assert.equal(await view.page.getAttribute('.sw-sev-toggle[data-severity="warning"]', 'aria-pressed'), 'false');
      await view.page.click('.sw-sev-toggle[data-severity="warning"]');
      await view.page.fill('.sw-filter-text', 'TURN');
      assert.deepEqual(await ids(view.page), [2]);
      await view.page.fill('.sw-filter-text', '78:1'); // matches the place
      assert.deepEqual(await ids(view.page), [3]);
      await view.page.fill('.sw-filter-text', 'turn');
      await view.send(panelState()); // the host re-sends state while analysing
      assert.deepEqual(await ids(view.page), [2]);
      assert.equal(await view.page.inputValue('.sw-filter-text'), 'turn');
      await view.page.fill('.sw-filter-text', 'no such thing');
      assert.deepEqual(await ids(view.page), []);
      assert.match(await view.page.textContent('.sw-no-findings'), /No finding matches/);
      // Another shard's state starts with no text filter.
      const other = panelState();
      await view.send({ ...other, summary: { ...other.summary, path: '/data/other.jsonl', fileName: 'other.jsonl' } });
      assert.equal(await view.page.inputValue('.sw-filter-text'), '');
      assert.deepEqual(await ids(view.page), [1, 2, 4, 3]);
    } finally {
      await view.close();
    }
  });

  test('a capped list says how many of how many it shows', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT });
    try {
      const findings = [];
      for (let i = 0; i < 1200; i++) findings.push(finding(i + 1, i % 2 ? 'warning' : 'error', 'chat-role', `Unknown role on turn ${i}`, i));
      const s = panelState();
      await view.send({ ...s, findings, totalFindings: 48_213, summary: { ...s.summary, findingsByRule: { 'chat-role': 48_213 } } });
      assert.match(await view.page.textContent('.sw-capped'), /Showing 1,200 of 48,213 findings/);
      // A large rule group starts closed, with its whole count; opening it lists its findings.
      assert.deepEqual(await ids(view.page), []);
      assert.equal(await view.page.textContent('.sw-group-head[data-rule="chat-role"] .sw-group-count'), '48,213');
      assert.equal(await view.page.getAttribute('.sw-group-head[data-rule="chat-role"]', 'aria-expanded'), 'false');
      await view.page.click('.sw-group-head[data-rule="chat-role"]');
      assert.equal(await view.page.getAttribute('.sw-group-head[data-rule="chat-role"]', 'aria-expanded'), 'true');
      const shown = (await ids(view.page)).length;
      assert.ok(shown > 0 && shown <= 1200);
      if (shown < 1200) {
        await view.page.click('.sw-findings-more');
        assert.ok((await ids(view.page)).length > shown);
      }
    } finally {
      await view.close();
    }
  });

  test('hostile finding text and file names show as literal text and run nothing', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel', viewport: PANEL_VIEWPORT, title: HOSTILE_TEXT });
    try {
      const s = panelState();
      const findings = HOSTILE.map((t, i) => ({ ...finding(i + 1, 'error', t, t, i), place: t }));
      await view.send({
        ...s,
        summary: { ...s.summary, fileName: HOSTILE_TEXT, path: HOSTILE[0], format: HOSTILE[1], phase: 'failed', error: HOSTILE[2], tokens: { ...s.summary.tokens, encoding: HOSTILE[1] } },
        findings,
      });
      // Rendered (and any handler would have run) once a frame has painted the state.
      await view.page.waitForSelector('.sw-finding');
      await view.page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.equal(await view.page.$$eval('img, svg, script:not([nonce])', (x) => x.length), 0);
      assert.equal(await view.page.textContent('.sw-summary .sw-file-name'), HOSTILE_TEXT);
      const messages = await view.page.$$eval('.sw-findings .sw-message', (ms) => ms.map((m) => m.textContent));
      // Grouped by rule (here each hostile text is its own rule): every one shown, literally.
      assert.deepEqual([...messages].sort(), [...HOSTILE].sort());
      assert.deepEqual((await view.page.$$eval('.sw-group-head .sw-rule', (ms) => ms.map((m) => m.textContent))).sort(), [...HOSTILE].sort());
      assert.equal(await view.page.textContent('.sw-summary .sw-banner-text'), HOSTILE[2]);
      await view.send({ type: 'empty', message: HOSTILE_TEXT });
      assert.equal(await view.page.textContent('.sw-empty-text'), HOSTILE_TEXT);
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      // W3C CSP Level 3 §5.3: securitypolicyviolation would fire for a blocked script; none may be needed.
      assert.deepEqual(await view.cspViolations(), []);
      assert.deepEqual(view.errors, []);
    } finally {
      await view.close();
    }
  });
});
