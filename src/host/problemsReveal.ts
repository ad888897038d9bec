// A Problems entry reveals its place where the person reads the file. Activating an entry opens the
// `shardwise-findings:` document it is filed under (diagnostics.ts) at the entry's place; this closes
// that document at once and shows the place: in the text editor of the data file when that was the
// active editor, otherwise in the record view (the record selected, the field revealed), opening
// the record view when no editor shows the file.

import * as vscode from 'vscode';
import { FINDINGS_SCHEME, type ShardDiagnostics } from './diagnostics.js';
import { RECORD_VIEW_TYPE, type RecordEditorProvider } from './recordEditor.js';

export class ProblemsReveal implements vscode.Disposable {
  /** The editor the person last worked in (a data file's text editor or its record view). */
  private lastActive: { kind: 'text' | 'record'; uri: string } | null = null;
  private readonly subs: vscode.Disposable[] = [];
  /** Places revealed from Problems so far (read by the workbench tests through a command). */
  revealed = 0;

  constructor(
    private readonly diagnostics: ShardDiagnostics,
    private readonly editors: RecordEditorProvider,
  ) {
    this.subs.push(
      vscode.window.onDidChangeActiveTextEditor((ed) => {
        if (!ed) return;
        if (ed.document.uri.scheme === FINDINGS_SCHEME) this.opened(ed);
        else this.lastActive = { kind: 'text', uri: ed.document.uri.toString() };
      }),
      // The editor places the selection just after it opens the document: that is the entry's place.
      vscode.window.onDidChangeTextEditorSelection((e) => {
        if (e.textEditor === this.pending?.editor) this.settle(e.selections[0].start);
      }),
      editors.onDidChangeActive((a) => {
        if (a?.panel.active) this.lastActive = { kind: 'record', uri: a.document.uri.toString() };
      }),
    );
  }

  private pending: { editor: vscode.TextEditor; timer: NodeJS.Timeout } | null = null;

  private opened(editor: vscode.TextEditor): void {
    if (this.pending) clearTimeout(this.pending.timer);
    // An entry at the very start of the document changes no selection: its place is the one it opened with.
    this.pending = { editor, timer: setTimeout(() => this.settle(editor.selection.start), 400) };
  }

  private settle(at: vscode.Position): void {
    const p = this.pending;
    if (!p) return;
    clearTimeout(p.timer);
    this.pending = null;
    void this.reveal(p.editor.document.uri, at);
  }

  private async reveal(problems: vscode.Uri, at: vscode.Position): Promise<void> {
    const hit = this.diagnostics.findingAt(problems, at);
    // The stand-in document goes at once, wherever it opened.
    for (const g of vscode.window.tabGroups.all) {
      for (const t of g.tabs) {
        if (t.input instanceof vscode.TabInputText && t.input.uri.scheme === FINDINGS_SCHEME) await vscode.window.tabGroups.close(t, true);
      }
    }
    if (!hit) return;
    const { file, finding } = hit;
    const key = file.toString();
    this.revealed++;
    if (this.lastActive?.kind === 'text' && this.lastActive.uri === key && finding?.line != null) {
      const pos = new vscode.Position(finding.line - 1, Math.max(0, (finding.column ?? 1) - 1));
      const shown = vscode.window.visibleTextEditors.find((e) => e.document.uri.toString() === key);
      await vscode.window.showTextDocument(shown ? shown.document.uri : file, { selection: new vscode.Range(pos, pos), viewColumn: shown?.viewColumn, preview: false });
      return;
    }
    const entry = finding?.entry ?? null;
    const pointer = finding?.pointer ?? undefined;
    const doc = this.editors.documentOf(file);
    if (doc && (entry === null ? this.editors.revealEditorOf(doc) : this.editors.revealInActive(doc, entry, pointer))) return;
    // No record view shows the file: open one, which selects the record once it has its first page.
    if (entry !== null) this.editors.revealWhenOpen(file, entry, pointer);
    this.editors.explicit.add(key);
    await vscode.commands.executeCommand('vscode.openWith', file, RECORD_VIEW_TYPE);
  }

  dispose(): void {
    for (const s of this.subs) s.dispose();
  }
}
