// The HTML shell of both webviews. Pure: no 'vscode' import, so the Chromium tests load the same page.
// The Content-Security-Policy allows only our own origin's styles and fonts and one nonce'd script.

export interface WebviewHtmlOptions {
  kind: 'recordView' | 'panel';
  /** The webview's resource origin (`webview.cspSource`). */
  cspSource: string;
  nonce: string;
  scriptUri: string;
  styleUris: string[];
  codiconUri: string;
  title: string;
  /** The display language (`vscode.env.language`): numbers in the webview are formatted for it. */
  language?: string;
  /** The display language's translations of the webview's strings, keyed by the English text (`vscode.l10n.bundle`). */
  strings?: Record<string, string>;
}

const HTML_ESCAPES: Record<string, string> = {
  '&': '&amp;',
  '<': '&lt;',
  '>': '&gt;',
  '"': '&quot;',
  "'": '&#39;',
};

/** Escapes text for an HTML text node or a quoted attribute value. */
export function escapeHtml(s: string): string {
  return String(s).replace(/[&<>"']/g, (c) => HTML_ESCAPES[c]);
}

// VS Code's webview.cspSource is a source list such as `'self' https://*.vscode-cdn.net` (seen in
// code-server 4.139 here): host sources and the 'self' keyword. Nothing may carry `;` or `,` (they
// would open a new directive or policy) nor any other quoted keyword.
const CSP_ITEM = "(?:'self'|[A-Za-z0-9+.\\-:/*_]+)";
const CSP_SOURCE = new RegExp(`^${CSP_ITEM}(?: ${CSP_ITEM})*$`);
const NONCE = /^[A-Za-z0-9+/=_-]{16,}$/;

export function contentSecurityPolicy(cspSource: string, nonce: string): string {
  if (!CSP_SOURCE.test(cspSource)) throw new Error(`unsafe webview resource origin: ${JSON.stringify(cspSource)}`);
  if (!NONCE.test(nonce)) throw new Error('the script nonce must be at least 16 base64 characters');
  return [
    "default-src 'none'",
    `img-src ${cspSource} data:`,
    `style-src ${cspSource}`,
    `font-src ${cspSource}`,
    `script-src 'nonce-${nonce}'`,
  ].join('; ') + ';';
}

export function renderWebviewHtml(o: WebviewHtmlOptions): string {
  const csp = contentSecurityPolicy(o.cspSource, o.nonce);
  const styles = [o.codiconUri, ...o.styleUris]
    .map((u) => `    <link rel="stylesheet" href="${escapeHtml(u)}">`)
    .join('\n');
  const table: Record<string, string> = {};
  for (const [k, v] of Object.entries(o.strings ?? {})) if (typeof v === 'string') table[k] = v;
  const lang = /^[A-Za-z]{2,8}(-[A-Za-z0-9]{1,8})*$/.test(o.language ?? '') ? o.language! : 'en';
  return `<!DOCTYPE html>
<html lang="${lang}">
  <head>
    <meta charset="utf-8">
    <meta http-equiv="Content-Security-Policy" content="${escapeHtml(csp)}">
    <meta name="viewport" content="width=device-width, initial-scale=1">
    <meta name="sw-strings" content="${escapeHtml(JSON.stringify(table))}">
${styles}
    <title>${escapeHtml(o.title)}</title>
  </head>
  <body class="sw-body sw-kind-${o.kind === 'panel' ? 'panel' : 'recordView'}">
    <div id="sw-root" class="sw-root" data-view="${o.kind === 'panel' ? 'panel' : 'recordView'}"></div>
    <script nonce="${escapeHtml(o.nonce)}" src="${escapeHtml(o.scriptUri)}"></script>
  </body>
</html>
`;
}

/** 32 random bytes as base64: a fresh nonce for every page load. */
export function makeNonce(): string {
  const bytes = new Uint8Array(32);
  globalThis.crypto.getRandomValues(bytes);
  let bin = '';
  for (const b of bytes) bin += String.fromCharCode(b);
  return btoa(bin);
}
