// The side panel: the active shard's summary and findings, each linked to its record and line.

import * as vscode from 'vscode';
import type { HostToPanel, PanelToHost } from '../protocol.js';
import { isMessage } from '../protocol.js';
import { openAtFinding } from './openText.js';
import type { RecordEditorProvider } from './recordEditor.js';
import type { ShardDocument } from './shardDocument.js';
import { webviewHtml } from './webviewAssets.js';

export const PANEL_VIEW_ID = 'shardwise.panel';
const FINDINGS_SHOWN = 2000;

export class PanelViewProvider implements vscode.WebviewViewProvider {
  private view: vscode.WebviewView | null = null;
  private doc: ShardDocument | null = null;
  private timer: NodeJS.Timeout | null = null;
  private ready = false;

  constructor(
    private readonly context: vscode.ExtensionContext,
    private readonly editors: RecordEditorProvider,
  ) {
    editors.onDidChangeActive((a) => {
      if (a) this.show(a.document);
    });
    editors.onDidChangeDocument((d) => {
      if (d === this.doc) this.schedule();
    });
  }

  resolveWebviewView(view: vscode.WebviewView): void {
    this.view = view;
    this.ready = false;
    view.webview.options = {
      enableScripts: true,
      localResourceRoots: [vscode.Uri.joinPath(this.context.extensionUri, 'dist'), vscode.Uri.joinPath(this.context.extensionUri, 'media')],
    };
    view.webview.html = webviewHtml(this.context, view.webview, 'panel', 'Shard report');
    view.webview.onDidReceiveMessage((raw: unknown) => {
      if (!isMessage(raw)) return;
      void this.onMessage(raw as PanelToHost).catch((err) => void vscode.window.showErrorMessage(vscode.l10n.t('Shardwise: {0}', (err as Error).message)));
    });
    view.onDidChangeVisibility(() => {
      if (view.visible) this.push();
    });
    view.onDidDispose(() => {
      this.view = null;
    });
    this.doc ??= this.editors.active?.document ?? null;
  }

  show(doc: ShardDocument): void {
    this.doc = doc;
    this.push();
  }

  private async onMessage(msg: PanelToHost): Promise<void> {
    switch (msg.type) {
      case 'ready':
        this.ready = true;
        this.push();
        return;
      case 'reveal': {
        const f = this.doc?.findingById(msg.id);
        if (!f || !this.doc || f.entry === null) return;
        this.editors.revealInActive(this.doc, f.entry, f.pointer ?? undefined);
        return;
      }
      case 'showRecords': {
        if (!this.doc) return;
        const t = this.doc.tally.tokenStats(this.doc.settings.config.contextLength);
        const longest = { key: 'tokens' as const, descending: true };
        const q =
          msg.what === 'max' ? { sort: longest }
          : msg.what === 'p99' ? { filter: { kind: 'tokensAtLeast' as const, tokens: t.p99 }, sort: longest }
          : { filter: { kind: 'overContext' as const }, sort: longest };
        this.editors.queryInActive(this.doc, q, msg.what === 'max');
        return;
      }
      case 'openText': {
        const f = this.doc?.findingById(msg.id);
        if (!f || !this.doc || f.entry === null) return;
        await openAtFinding(this.doc, f.entry, f);
        return;
      }
    }
  }

  private schedule(): void {
    if (this.timer) return;
    this.timer = setTimeout(() => {
      this.timer = null;
      this.push();
    }, 250);
  }

  private push(): void {
    if (!this.view || !this.ready) return;
    let msg: HostToPanel;
    if (!this.doc || !this.doc.settings) {
      msg = { type: 'empty', message: 'Open a JSONL, Parquet or Arrow shard in the Shardwise record view to see its report here.' };
    } else {
      msg = {
        type: 'state',
        summary: this.doc.summary(),
        findings: this.doc.findingViews(FINDINGS_SHOWN),
        totalFindings: this.doc.tally.totalFindings,
      };
    }
    void this.view.webview.postMessage(msg);
  }
}
