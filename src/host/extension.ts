// Activation: registers the record view, the side panel, Problems, commands and settings.
// VS Code glue only: formats and rules live in the engine.

import * as vscode from 'vscode';
import { ResultsStore } from './resultsStore.js';
import { PROJECT_FILE } from '../engine/project.js';
import { PLACE_HINT, parsePlace } from '../engine/places.js';
import { tokenizerLabel } from '../engine/tokens/kinds.js';
import { tokenizerOf } from '../engine/tokens/tokenizer.js';
import { chooseTokenizer } from './tokenizerPicker.js';
import { FINDINGS_SCHEME, ShardDiagnostics } from './diagnostics.js';
import { ProblemsReveal } from './problemsReveal.js';
import { RECORD_TEXT_SCHEME, recordTexts } from './openText.js';
import { PANEL_VIEW_ID, PanelViewProvider } from './panelView.js';
import { RECORD_VIEW_TYPE, RecordEditorProvider, noSuchPlace } from './recordEditor.js';
import { SECTION } from './settings.js';
import { ShardDocument } from './shardDocument.js';

export function activate(context: vscode.ExtensionContext): void {
  // Checked results are kept in the extension's own storage, never beside the data.
  ShardDocument.store = new ResultsStore(vscode.Uri.joinPath(context.globalStorageUri, 'results').fsPath);
  const editors = new RecordEditorProvider(context);
  const panel = new PanelViewProvider(context, editors);
  const diagnostics = new ShardDiagnostics();
  const reveal = new ProblemsReveal(diagnostics, editors);
  const docs = new Set<ShardDocument>();

  context.subscriptions.push(
    vscode.window.registerCustomEditorProvider(RECORD_VIEW_TYPE, editors, {
      // No retained context: a hidden record view is rebuilt from its saved state and the host's pages.
      supportsMultipleEditorsPerDocument: false,
    }),
    // JSON array files (.json) open in the same view when the user picks it ("Open With…").
    vscode.window.registerCustomEditorProvider(`${RECORD_VIEW_TYPE}.json`, editors, {
      supportsMultipleEditorsPerDocument: false,
    }),
    vscode.window.registerWebviewViewProvider(PANEL_VIEW_ID, panel, { webviewOptions: { retainContextWhenHidden: true } }),
    vscode.workspace.registerTextDocumentContentProvider(RECORD_TEXT_SCHEME, recordTexts),
    diagnostics,
    reveal,
  );

  // While any shard is being checked, Stop shows (a context key for the menus' when clauses).
  let checking = false;
  const updateChecking = () => {
    const now = [...docs].some((d) => d.phase === 'analysing');
    if (now !== checking) {
      checking = now;
      void vscode.commands.executeCommand('setContext', 'shardwise.checking', now);
    }
  };
  // A status-bar item while a record view is active: its tokenizer and context length; a click opens the picker.
  const status = vscode.window.createStatusBarItem('shardwise.tokenizer', vscode.StatusBarAlignment.Right, 100);
  status.name = vscode.l10n.t('Shardwise tokenizer');
  status.command = 'shardwise.chooseEncoding';
  const updateStatus = () => {
    const d = activeDoc();
    if (!d?.settings) return void status.hide();
    const c = d.settings.config;
    status.text = `$(symbol-numeric) ${tokenizerLabel(tokenizerOf(c))} · ${c.contextLength.toLocaleString(vscode.env.language)}`;
    status.tooltip = vscode.l10n.t('Tokens of {0} are counted with {1}; records over {2} tokens are reported. Click to choose the tokenizer.', d.fileName, tokenizerOf(c), c.contextLength.toLocaleString(vscode.env.language));
    status.show();
  };
  context.subscriptions.push(status, editors.onDidChangeActive(updateStatus));

  editors.onDidChangeDocument((doc) => {
    updateChecking();
    if (doc === activeDoc()) updateStatus();
    if (!docs.has(doc)) {
      docs.add(doc);
      doc.onDidChange(() => {
        updateChecking();
        if (doc === activeDoc()) updateStatus();
      });
      doc.onDidDispose(() => {
        docs.delete(doc);
        // Findings stay while the file is open in a text editor; they go when that closes too.
        if (!vscode.workspace.textDocuments.some((t) => t.uri.toString() === doc.uri.toString())) diagnostics.clear(doc);
        else diagnostics.detach(doc);
      });
    }
    if (doc.settings) diagnostics.update(doc, doc.settings.maxProblems);
  });

  const activeDoc = (): ShardDocument | undefined => editors.active?.document;

  context.subscriptions.push(
    vscode.commands.registerCommand('shardwise.openRecordView', async (uri?: vscode.Uri) => {
      const target = uri ?? vscode.window.activeTextEditor?.document.uri;
      if (!target) {
        const picked = await vscode.window.showOpenDialog({
          canSelectMany: false,
          // The record view's own selectors name the usual endings; files are known by their bytes, so any file may be picked.
          filters: { Shards: dialogExtensions(context), 'All files': ['*'] },
        });
        if (!picked?.[0]) return;
        editors.explicit.add(picked[0].toString());
        return vscode.commands.executeCommand('vscode.openWith', picked[0], RECORD_VIEW_TYPE);
      }
      editors.explicit.add(target.toString());
      return vscode.commands.executeCommand('vscode.openWith', target, RECORD_VIEW_TYPE);
    }),
    vscode.commands.registerCommand('shardwise.goTo', async () => {
      const a = editors.active;
      if (!a) return void vscode.window.showInformationMessage(vscode.l10n.t('Shardwise: open a shard in the record view first.'));
      const text = await vscode.window.showInputBox({
        title: vscode.l10n.t('Go to Record, Line or Row'),
        prompt: vscode.l10n.t('A record number (12 or #12), "line 40" or "row 7" — all count from 1, as the record view shows them'),
        validateInput: (v) => (parsePlace(v) ? null : PLACE_HINT),
      });
      const g = text ? parsePlace(text) : null;
      if (!g) return;
      const entry = a.document.entryOfPlace(g);
      if (entry < 0 || entry >= (a.document.info?.entries ?? 0)) return void vscode.window.showWarningMessage(vscode.l10n.t('Shardwise: {0}', noSuchPlace(a.document, g.kind, g.value)));
      a.panel.reveal(a.panel.viewColumn, false);
      a.select(entry);
    }),
    vscode.commands.registerCommand('shardwise.chooseEncoding', () => chooseTokenizer(SECTION, settingTarget('tokens.tokenizer', activeDoc()?.uri))),
    vscode.commands.registerCommand('shardwise.setContextLength', async () => {
      const current = vscode.workspace.getConfiguration(SECTION, activeDoc()?.uri).get<number>('tokens.contextLength', 8192);
      const v = await vscode.window.showInputBox({
        title: vscode.l10n.t('Context length in tokens'),
        value: String(current),
        validateInput: (s) => (/^[1-9][0-9]{0,8}$/.test(s.trim()) && Number(s.trim()) <= 100_000_000 ? null : vscode.l10n.t('A whole number of tokens from 1 to 100,000,000')),
      });
      if (!v) return;
      const uri = activeDoc()?.uri;
      await vscode.workspace.getConfiguration(SECTION, uri).update('tokens.contextLength', Number(v.trim()), settingTarget('tokens.contextLength', uri));
    }),
    vscode.commands.registerCommand('shardwise.checkAgain', () => {
      const d = activeDoc();
      if (d) void d.analyze();
    }),
    vscode.commands.registerCommand('shardwise.cancel', () => {
      const d = activeDoc();
      if (d) d.cancel();
      else for (const x of docs) if (x.phase === 'analysing') x.cancel();
    }),
    // The record view's row context menu: the context carries the view position (and a cell's column).
    ...(['copyRecord', 'copyPlace', 'openAtLine', 'showInPanel', 'filterLikeThis'] as const).map((action) =>
      vscode.commands.registerCommand(`shardwise.row.${action}`, (ctx?: { position?: unknown; column?: unknown }) => {
        const a = editors.active;
        const pos = typeof ctx?.position === 'number' ? ctx.position : -1;
        if (a && pos >= 0) return a.rowAction(action, pos, typeof ctx?.column === 'string' ? ctx.column : undefined);
      }),
    ),
    vscode.commands.registerCommand('shardwise.reopenAsText', async (uri?: vscode.Uri) => {
      const target = uri instanceof vscode.Uri ? uri : activeDoc()?.uri;
      if (target) await vscode.commands.executeCommand('vscode.openWith', target, 'default');
    }),
    vscode.commands.registerCommand('shardwise.showReport', () => vscode.commands.executeCommand(`${PANEL_VIEW_ID}.focus`)),
    vscode.workspace.onDidCloseTextDocument((t) => {
      if (t.uri.scheme === FINDINGS_SCHEME) return;
      if (![...docs].some((d) => d.uri.toString() === t.uri.toString())) diagnostics.clearFile(t.uri);
    }),
    // Trust granted: the settings held back apply now.
    vscode.workspace.onDidGrantWorkspaceTrust(() => {
      for (const d of docs) void d.analyze();
    }),
    vscode.workspace.onDidChangeConfiguration((e) => {
      if (!e.affectsConfiguration(SECTION)) return;
      for (const d of docs) if (e.affectsConfiguration(SECTION, d.uri)) void d.settingsChanged();
    }),
    // A project file (shardwise.json) that appears, changes or goes away re-checks the shards below it.
    ...(() => {
      const w = vscode.workspace.createFileSystemWatcher(`**/${PROJECT_FILE}`);
      const recheck = (u: vscode.Uri) => {
        const dir = u.path.slice(0, u.path.lastIndexOf('/') + 1);
        for (const d of docs) if (d.uri.path.startsWith(dir)) void d.settingsChanged();
      };
      return [w, w.onDidCreate(recheck), w.onDidChange(recheck), w.onDidDelete(recheck)];
    })(),
  );
}

/**
 * Where a command writes a setting: where it is already set (folder, then workspace), else the
 * user's settings — never a new .vscode/settings.json in a data repository unasked.
 */
export function settingTarget(key: string, resource?: vscode.Uri): vscode.ConfigurationTarget {
  const i = vscode.workspace.getConfiguration(SECTION, resource).inspect(key);
  if (i?.workspaceFolderValue !== undefined) return vscode.ConfigurationTarget.WorkspaceFolder;
  if (i?.workspaceValue !== undefined) return vscode.ConfigurationTarget.Workspace;
  return vscode.ConfigurationTarget.Global;
}


export function deactivate(): void {}

/** Last name segments (`gz` of `*.jsonl.gz`) of the record view's file patterns in package.json. */
function dialogExtensions(context: vscode.ExtensionContext): string[] {
  const editors = (context.extension.packageJSON?.contributes?.customEditors ?? []) as { selector?: { filenamePattern?: string }[] }[];
  const last = editors.flatMap((e) => e.selector ?? []).map((s) => /\.([^.*]+)$/.exec(s.filenamePattern ?? '')?.[1]);
  return [...new Set(last.filter((x): x is string => !!x))];
}
