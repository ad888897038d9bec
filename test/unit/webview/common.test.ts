// Pure helpers of the webviews: the page cache and the content security policy.
import { describe, expect, it, test } from 'vitest';
import { Lru } from '../../../src/webview/common.js';

describe('Lru', () => {
  test('drops the least recently used entry past its capacity', () => {
    const c = new Lru<number, string>(2);
    c.set(1, 'a');
    c.set(2, 'b');
    expect(c.get(1)).toBe('a'); // 1 is now the most recent
    c.set(3, 'c');
    expect(c.peek(2)).toBeUndefined();
    expect(c.peek(1)).toBe('a');
    expect(c.peek(3)).toBe('c');
    expect(c.size).toBe(2);
  });
});

describe('content security policy for the webview origins VS Code hands out', () => {
  it("accepts a source list with the 'self' keyword (as code-server 4.139 gives it) and refuses injections", async () => {
    const { contentSecurityPolicy } = await import('../../../src/host/webviewHtml');
    const nonce = 'abcdefghijklmnopqrstuvwx';
    expect(contentSecurityPolicy("'self' https://*.vscode-cdn.net", nonce)).toContain("style-src 'self' https://*.vscode-cdn.net");
    expect(contentSecurityPolicy('vscode-webview://abc123', nonce)).toContain('img-src vscode-webview://abc123 data:');
    expect(() => contentSecurityPolicy("'unsafe-inline'", nonce)).toThrow();
    expect(() => contentSecurityPolicy("https://a; script-src 'unsafe-eval'", nonce)).toThrow();
    expect(() => contentSecurityPolicy('https://a, https://b', nonce)).toThrow();
  });
});
