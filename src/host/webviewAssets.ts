// Builds a webview's HTML from the bundled script and our CSS, under a strict CSP.

import * as vscode from 'vscode';
import { makeNonce, renderWebviewHtml } from './webviewHtml.js';

export function webviewHtml(
  context: vscode.ExtensionContext,
  webview: vscode.Webview,
  kind: 'recordView' | 'panel',
  title: string,
): string {
  const asset = (...p: string[]) => webview.asWebviewUri(vscode.Uri.joinPath(context.extensionUri, ...p)).toString();
  return renderWebviewHtml({
    kind,
    cspSource: webview.cspSource,
    nonce: makeNonce(),
    scriptUri: asset('dist', 'webview', `${kind}.js`),
    styleUris: [asset('media', 'common.css'), asset('media', `${kind}.css`)],
    codiconUri: asset('dist', 'codicons', 'codicon.css'),
    title,
    language: vscode.env.language,
    strings: vscode.l10n.bundle ?? {},
  });
}
