// The webviews show the strings of the host's localisation bundle (keyed by the English text), with {0} filled in.
import { describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { openView, useBrowser } from './harness.mjs';

describe('webview strings from the host', () => {
  const env = useBrowser();

  test('the record view shows translated strings and fills {0}', async () => {
    const strings = { 'Search records (Ctrl+F)': 'Datensätze suchen (Strg+F)', 'indexing {0}%': 'Indizierung {0} %' };
    const view = await openView(env.browser, env.server, { kind: 'recordView', strings });
    try {
      assert.equal(await view.page.$eval('.sw-search-input', (e) => e.placeholder), 'Datensätze suchen (Strg+F)');
      assert.equal(await view.page.$eval('.sw-indexing-text', (e) => e.textContent), 'Indizierung 0 %');
      // An untranslated string stays English.
      assert.equal(await view.page.$eval('.sw-goto-input', (e) => e.placeholder), 'Go to: 12 · line 40 · row 7');
    } finally {
      await view.close();
    }
  });

  test('the panel shows a translated string; without a table it is English', async () => {
    const de = 'Öffne einen Shard, um hier seine Übersicht und Befunde zu sehen.';
    const view = await openView(env.browser, env.server, { kind: 'panel', strings: { 'Open a shard to see its summary and findings here.': de } });
    try {
      await view.send({ type: 'empty' });
      await view.page.waitForFunction(() => !document.querySelector('.sw-empty').hidden);
      assert.equal(await view.page.$eval('.sw-empty-text', (e) => e.textContent), de);
    } finally {
      await view.close();
    }
    const en = await openView(env.browser, env.server, { kind: 'panel' });
    try {
      await en.send({ type: 'empty' });
      await en.page.waitForFunction(() => !document.querySelector('.sw-empty').hidden);
      assert.equal(await en.page.$eval('.sw-empty-text', (e) => e.textContent), 'Open a shard to see its summary and findings here.');
    } finally {
      await en.close();
    }
  });
});
