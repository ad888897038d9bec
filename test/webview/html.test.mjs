// The HTML shell of the webviews: its Content-Security-Policy and its escaping.
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { buildBundles, openView, useBrowser } from './harness.mjs';

const { html } = await buildBundles();

const base = {
  kind: 'recordView',
  cspSource: 'https://file+.vscode-resource.vscode-cdn.net',
  nonce: 'QUJDREVGR0hJSktMTU5PUFFSU1RVVldY',
  scriptUri: 'https://file+.vscode-resource.vscode-cdn.net/ext/dist/webview/recordView.js',
  styleUris: ['https://file+.vscode-resource.vscode-cdn.net/ext/media/common.css'],
  codiconUri: 'https://file+.vscode-resource.vscode-cdn.net/ext/dist/codicons/codicon.css',
  title: 'shard.jsonl',
};

/** W3C CSP Level 3 §2.2: a serialized policy is `;`-separated directives, each a name and a space-separated source list. */
function parsePolicy(text) {
  const out = new Map();
  for (const part of text.split(';')) {
    const tokens = part.trim().split(/\s+/).filter(Boolean);
    if (!tokens.length) continue;
    const name = tokens[0].toLowerCase();
    if (!out.has(name)) out.set(name, tokens.slice(1)); // §2.2: a repeated directive is ignored
  }
  return out;
}

function cspOf(doc) {
  const m = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(doc);
  assert.ok(m, 'the page declares its policy in a meta element');
  return parsePolicy(m[1].replace(/&#39;/g, "'").replace(/&quot;/g, '"').replace(/&amp;/g, '&'));
}

describe('webview HTML shell', () => {
  test('the policy denies by default and allows only our origin and the nonce', () => {
    const p = cspOf(html.renderWebviewHtml(base));
    assert.deepEqual(p.get('default-src'), ["'none'"]);
    assert.deepEqual(p.get('img-src'), [base.cspSource, 'data:']);
    assert.deepEqual(p.get('style-src'), [base.cspSource]);
    assert.deepEqual(p.get('font-src'), [base.cspSource]);
    assert.deepEqual(p.get('script-src'), [`'nonce-${base.nonce}'`]);
    for (const [, sources] of p) {
      assert.ok(!sources.includes("'unsafe-inline'") && !sources.includes("'unsafe-eval'"));
    }
  });

  test('every interpolated string is escaped', () => {
    const evil = '"><script>window.__pwned=1</script>';
    const doc = html.renderWebviewHtml({ ...base, title: evil, scriptUri: `x${evil}`, styleUris: [evil], codiconUri: evil });
    // HTML Living Standard §13.1.2.3: `<` inside a quoted attribute is harmless, `"` ends it; escaping both keeps one script element.
    assert.equal(doc.match(/<script\b/g).length, 1);
    assert.ok(!doc.includes(evil));
    assert.ok(doc.includes('&lt;/script&gt;'));
    assert.ok(doc.includes('<title>&quot;&gt;&lt;script&gt;window.__pwned=1&lt;/script&gt;</title>'));
  });

  test('an origin or nonce that would smuggle a directive is refused', () => {
    assert.throws(() => html.renderWebviewHtml({ ...base, cspSource: "https://a; script-src 'unsafe-inline'" }), /origin/);
    assert.throws(() => html.renderWebviewHtml({ ...base, nonce: "abc' 'unsafe-inline" }), /nonce/);
    assert.throws(() => html.renderWebviewHtml({ ...base, nonce: 'short' }), /nonce/);
  });

  test('makeNonce gives 32 random bytes in base64, fresh each time', () => {
    const seen = new Set();
    for (let i = 0; i < 200; i++) {
      const n = html.makeNonce();
      // RFC 4648 §4: 32 bytes encode to 44 base64 characters with one '=' of padding.
      assert.match(n, /^[A-Za-z0-9+/]{43}=$/);
      assert.equal(Buffer.from(n, 'base64').length, 32);
      seen.add(n);
    }
    assert.equal(seen.size, 200);
  });
});

describe('webview HTML shell in Chromium', () => {
  const env = useBrowser();

  test('the policy is in force: an injected inline script is blocked and reported', async () => {
    const view = await openView(env.browser, env.server, { kind: 'panel' });
    try {
      // Only the harness can do this; it proves the page would stop markup that slipped through.
      await view.page.evaluate(() => {
        const s = document.createElement('script');
        s.textContent = 'window.__pwned = 1';
        document.body.append(s);
        const d = document.createElement('div');
        d.setAttribute('style', 'color: red');
        document.body.append(d);
      });
      await view.page.waitForFunction(() => window.__cspViolations.length >= 2);
      const v = await view.cspViolations();
      assert.ok(v.some((x) => x.directive.startsWith('script-src')));
      assert.ok(v.some((x) => x.directive.startsWith('style-src')));
      assert.equal(await view.page.evaluate(() => window.__pwned), undefined);
      // Our own sheets and the codicon font loaded under the policy.
      const faces = await view.page.evaluate(async () => (await document.fonts.load('16px codicon')).map((f) => f.status));
      assert.deepEqual(faces, ['loaded']);
      const sheets = await view.page.evaluate(() => [...document.styleSheets].map((s) => s.cssRules.length > 0));
      assert.deepEqual(sheets, [true, true, true, true]);
    } finally {
      await view.close();
    }
  });
  test('the display language goes into <html lang> (numbers follow it); anything else falls back to en', () => {
    assert.match(html.renderWebviewHtml({ ...base, language: 'de' }), /<html lang="de">/);
    assert.match(html.renderWebviewHtml({ ...base, language: 'zh-cn' }), /<html lang="zh-cn">/);
    assert.match(html.renderWebviewHtml({ ...base, language: '"><script>' }), /<html lang="en">/);
    assert.match(html.renderWebviewHtml(base), /<html lang="en">/);
  });
});
