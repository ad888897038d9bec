import { describe, expect, it } from 'vitest';
import { renderWebviewHtml } from '../../../src/host/webviewHtml.js';

const base = {
  kind: 'panel' as const,
  cspSource: "'self'",
  nonce: 'abcdefghijklmnopqrstuvwxyz012345',
  scriptUri: 'panel.js',
  styleUris: ['common.css'],
  codiconUri: 'codicon.css',
  title: 'Shardwise',
};

describe('renderWebviewHtml strings', () => {
  it('puts the translations in an escaped meta attribute that no value breaks out of', () => {
    const html = renderWebviewHtml({ ...base, strings: { 'Search records (Ctrl+F)': '"><script>alert(1)</script>', Findings: 'Befunde' } });
    const m = /<meta name="sw-strings" content="([^"]*)">/.exec(html);
    expect(m).not.toBeNull();
    expect(html).not.toContain('<script>alert');
    expect(html.match(/<script/g)?.length).toBe(1);
    const decoded = m![1].replace(/&quot;/g, '"').replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&#39;/g, "'").replace(/&amp;/g, '&');
    expect(JSON.parse(decoded)).toEqual({ 'Search records (Ctrl+F)': '"><script>alert(1)</script>', Findings: 'Befunde' });
  });
  it('writes an empty table when the display language is English', () => {
    expect(renderWebviewHtml(base)).toContain('<meta name="sw-strings" content="{}">');
  });
});
