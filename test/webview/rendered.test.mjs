// The record view's Rendered tab in headless Chromium: a sequence as the chat template renders it,
// the spans the loss covers marked, hostile record text shown as text (W3C CSP Level 3: no violation needed).
import { describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { openView, screenshot, useBrowser } from './harness.mjs';
import { chatDetail, HOSTILE, initMessage, rowsAnswer } from './fixtures.mjs';

const env = useBrowser();

describe('record view: rendered sequences', () => {
  test('shows the rendered text with its trained spans marked, and a template error as a note', async () => {
    const prompt = `<|im_start|>user\n${HOSTILE[0]}<|im_end|>\n<|im_start|>assistant\n`;
    const answer = `${HOSTILE[1]}<|im_end|>\n`;
    const text = prompt + answer;
    const rendered = [
      { name: 'messages', text, cut: false, spans: [{ start: prompt.length, end: text.length }], rendered: 40, content: 25, trainable: 12, error: null },
      { name: HOSTILE[2], text: '', cut: false, spans: [], rendered: 3, content: 3, trainable: 0, error: HOSTILE[2] },
    ];
    const view = await openView(env.browser, env.server, {
      kind: 'recordView',
      onMessage: async (m, v) => {
        if (m.type === 'requestRows') await v.send(rowsAnswer(m));
        else if (m.type === 'requestDetail') await v.send({ type: 'detail', detail: { ...chatDetail(m.entry), rendered } });
      },
    });
    try {
      await view.send(initMessage(20));
      await view.page.waitForSelector('.sw-rows .sw-row[data-entry="2"]');
      await view.page.click('.sw-rows .sw-row[data-entry="2"]');
      await view.page.click('.sw-tab[data-tab="rendered"]');
      await view.page.waitForSelector('.sw-rendered-text');
      assert.equal(await view.page.textContent('.sw-rendered-text'), text);
      assert.deepEqual(await view.page.$$eval('.sw-rendered-text .sw-trained', (m) => m.map((x) => x.textContent)), [answer]);
      const heads = await view.page.$$eval('.sw-rendered-head', (hs) => hs.map((x) => x.textContent));
      assert.match(heads[0], /messages40 rendered25 content · \+15 template12 trained/);
      assert.match(await view.page.textContent('.sw-rendered-error'), /could not render this sequence/);
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      assert.equal(await view.page.$$eval('img, svg, script:not([nonce])', (x) => x.length), 0);
      assert.deepEqual(await view.cspViolations(), []);
      assert.deepEqual(view.errors, []);
      await screenshot(view.page, 'record-view-rendered-dark');
    } finally {
      await view.close();
    }
  });
});
