// Pure helpers of the webviews: the go-to parser and the page cache.
import { describe, expect, it, test } from 'vitest';
import { Lru, parseGoto } from '../../../src/webview/common.js';

describe('parseGoto', () => {
  test('reads records, lines and rows as the view numbers them (1-based), posting record and row 0-based', () => {
    expect(parseGoto('12')).toEqual({ kind: 'record', value: 11 });
    expect(parseGoto(' #12 ')).toEqual({ kind: 'record', value: 11 });
    expect(parseGoto('line 40')).toEqual({ kind: 'line', value: 40 });
    expect(parseGoto('L40')).toEqual({ kind: 'line', value: 40 });
    expect(parseGoto('l 40')).toEqual({ kind: 'line', value: 40 });
    expect(parseGoto('row 7')).toEqual({ kind: 'entry', value: 6 });
    expect(parseGoto('ROW7')).toEqual({ kind: 'entry', value: 6 });
  });

  test('refuses what is not a place', () => {
    for (const bad of ['', 'abc', '0', 'line 0', 'row -1', '1.5', '12 13', 'line', '9'.repeat(20)]) {
      expect(parseGoto(bad), bad).toBeNull();
    }
  });
});

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
