// Findings in the Problems panel: those of text shards at line:column, those of Parquet and Arrow
// rows at the row (line N of the entry is row N, the row also named in the message); capped with
// one summary entry. They stay while the file is open in any editor.
//
// Where they are filed: VS Code opens a Problems entry's resource in that resource's default
// editor, and a custom editor (the record view) is never told the entry's place. So the entries of
// a data file are filed under a resource of our own (`shardwise-findings:`, named after the file)
// whose default editor is the text editor: activating an entry opens that small document at the
// entry's place, and `ProblemsReveal` (problemsReveal.ts) closes it at once and shows the place
// where the person reads the file — the record view, or the text editor when that is the active
// editor. The text editor of the data file itself shows the findings as wavy underlines with their
// messages on hover.

import * as vscode from 'vscode';
import type { Finding, Severity } from '../engine/findings.js';
import type { ShardDocument } from './shardDocument.js';
import { formatPlace } from '../engine/places.js';

export const FINDINGS_SCHEME = 'shardwise-findings';

const SEVERITY: Record<Severity, vscode.DiagnosticSeverity> = {
  error: vscode.DiagnosticSeverity.Error,
  warning: vscode.DiagnosticSeverity.Warning,
  info: vscode.DiagnosticSeverity.Information,
};

/** The resource a data file's Problems entries are filed under (its name says whose they are). */
export function problemsUriOf(file: vscode.Uri): vscode.Uri {
  const name = file.path.split('/').pop() ?? 'shard';
  const dir = file.path.slice(0, file.path.length - name.length);
  return vscode.Uri.from({ scheme: FINDINGS_SCHEME, path: `${dir}${name} (Shardwise)`, query: file.toString() });
}

/** The data file whose entries a `shardwise-findings:` resource holds. */
export function fileOfProblemsUri(uri: vscode.Uri): vscode.Uri | null {
  if (uri.scheme !== FINDINGS_SCHEME || !uri.query) return null;
  try {
    return vscode.Uri.parse(uri.query, true);
  } catch {
    return null;
  }
}

/** One Problems entry and the finding it stands for. */
export interface FiledFinding {
  range: vscode.Range;
  /** Where the finding is in the data file: its entry (null: the file as a whole), line, column and pointer. */
  entry: number | null;
  line: number | null;
  column: number | null;
  pointer: string | null;
  severity: Severity | null;
  message: string;
}

export class ShardDiagnostics implements vscode.TextDocumentContentProvider {
  readonly collection = vscode.languages.createDiagnosticCollection('shardwise');
  private timers = new Map<ShardDocument, NodeJS.Timeout>();
  /** Data file URI → its filed entries, in the order Problems got them. */
  private readonly filed = new Map<string, FiledFinding[]>();
  private readonly underline = new Map<Severity, vscode.TextEditorDecorationType>();
  private readonly subs: vscode.Disposable[] = [];

  constructor() {
    // The theme's own problem colours, as the editor's squiggles use them.
    const colour: Record<Severity, string> = { error: 'editorError.foreground', warning: 'editorWarning.foreground', info: 'editorInfo.foreground' };
    for (const s of ['error', 'warning', 'info'] as const) {
      this.underline.set(s, vscode.window.createTextEditorDecorationType({
        textDecoration: `underline wavy var(--vscode-${colour[s].replace('.', '-')})`,
        overviewRulerColor: new vscode.ThemeColor(colour[s]),
        overviewRulerLane: vscode.OverviewRulerLane.Right,
      }));
    }
    this.subs.push(
      vscode.workspace.registerTextDocumentContentProvider(FINDINGS_SCHEME, this),
      vscode.window.onDidChangeVisibleTextEditors((eds) => eds.forEach((e) => this.decorate(e))),
    );
  }

  update(doc: ShardDocument, max: number): void {
    if (this.timers.has(doc)) return;
    this.timers.set(
      doc,
      setTimeout(() => {
        this.timers.delete(doc);
        this.write(doc, max);
      }, 400),
    );
  }

  private write(doc: ShardDocument, max: number): void {
    const all = doc.tally.sortedFindings();
    const at = problemsUriOf(doc.uri);
    if (all.length === 0) {
      this.collection.delete(at);
      this.filed.delete(doc.uri.toString());
      this.redecorate(doc.uri);
      return;
    }
    const filed = all.slice(0, max).map((f) => toFiled(f));
    const shown = filed.map((f) => {
      const d = new vscode.Diagnostic(f.range, f.message, SEVERITY[f.severity ?? 'info']);
      d.source = 'shardwise';
      return d;
    });
    all.slice(0, max).forEach((f, i) => (shown[i].code = f.rule));
    const hidden = doc.tally.totalFindings - shown.length;
    if (hidden > 0) {
      const message = vscode.l10n.t('{0} more Shardwise findings are not listed here (limit shardwise.problems.max = {1}); the Shard Report panel and the CLI list them all.', hidden.toLocaleString(vscode.env.language), max);
      const d = new vscode.Diagnostic(new vscode.Range(0, 0, 0, 0), message, vscode.DiagnosticSeverity.Information);
      d.source = 'shardwise';
      d.code = 'more-findings';
      shown.push(d);
      filed.push({ range: d.range, entry: null, line: null, column: null, pointer: null, severity: null, message });
    }
    this.filed.set(doc.uri.toString(), filed);
    this.collection.set(at, shown);
    this.redecorate(doc.uri);
  }

  /** The filed entry a `shardwise-findings:` document was opened at (Problems puts the selection at its range). */
  findingAt(problems: vscode.Uri, at: vscode.Position): { file: vscode.Uri; finding: FiledFinding | null } | null {
    const file = fileOfProblemsUri(problems);
    if (!file) return null;
    const list = this.filed.get(file.toString()) ?? [];
    const exact = list.find((f) => f.range.start.isEqual(at));
    return { file, finding: exact ?? list.find((f) => f.range.start.line === at.line) ?? null };
  }

  /** Whether the data file has entries in Problems now. */
  has(file: vscode.Uri): boolean {
    return this.filed.has(file.toString());
  }

  /**
   * The short document a Problems entry opens: blank lines long enough to hold every entry's place
   * (the editor keeps a selection inside its document). It is closed as soon as it opens.
   */
  provideTextDocumentContent(uri: vscode.Uri): string {
    const file = fileOfProblemsUri(uri);
    const list = file ? this.filed.get(file.toString()) ?? [] : [];
    const width = new Map<number, number>();
    for (const f of list) width.set(f.range.end.line, Math.max(width.get(f.range.end.line) ?? 0, f.range.end.character));
    const last = Math.max(0, ...width.keys());
    const lines: string[] = [];
    for (let i = 0; i <= last; i++) lines.push(' '.repeat(width.get(i) ?? 0));
    return lines.join('\n');
  }

  private redecorate(file: vscode.Uri): void {
    for (const e of vscode.window.visibleTextEditors) if (e.document.uri.toString() === file.toString()) this.decorate(e);
  }

  /** Wavy underlines (with the message on hover) in a text editor of a data file that has findings. */
  private decorate(editor: vscode.TextEditor): void {
    if (editor.document.uri.scheme === FINDINGS_SCHEME) return;
    const list = this.filed.get(editor.document.uri.toString()) ?? [];
    for (const [sev, type] of this.underline) {
      const ranges = list
        .filter((f) => f.severity === sev && f.line !== null)
        .map((f) => {
          const line = Math.min(editor.document.lineCount - 1, f.line! - 1);
          const col = Math.max(0, (f.column ?? 1) - 1);
          return { range: new vscode.Range(line, col, line, col + 1), hoverMessage: `${f.message} (shardwise)` };
        });
      editor.setDecorations(type, ranges);
    }
  }

  clear(doc: ShardDocument): void {
    this.clearFile(doc.uri);
    const t = this.timers.get(doc);
    if (t) clearTimeout(t);
    this.timers.delete(doc);
  }

  /** Takes a data file's entries out of Problems (and its underlines away). */
  clearFile(file: vscode.Uri): void {
    this.collection.delete(problemsUriOf(file));
    this.filed.delete(file.toString());
    this.redecorate(file);
  }

  /** The document goes (its record view closed) but its findings stay in Problems. */
  detach(doc: ShardDocument): void {
    const t = this.timers.get(doc);
    if (t) clearTimeout(t);
    this.timers.delete(doc);
  }

  dispose(): void {
    for (const t of this.timers.values()) clearTimeout(t);
    this.collection.dispose();
    for (const t of this.underline.values()) t.dispose();
    for (const s of this.subs) s.dispose();
  }
}

export function diagnosticMessage(f: Finding): string {
  const at = f.pointer ? ` (at ${f.pointer})` : '';
  // A row has no line the panel can point at: the message names it (one formatter: engine/places.ts).
  return f.line === null ? `${formatPlace(f)}: ${f.message}${at}` : `${f.message}${at}`;
}

function toFiled(f: Finding): FiledFinding {
  // Text shards: the finding's line and column. Rows: line N of the entry is row N; the file as a whole: line 1.
  const line = f.line !== null ? Math.max(0, f.line - 1) : Math.max(0, f.entry ?? 0);
  const col = f.line !== null ? Math.max(0, (f.column ?? 1) - 1) : 0;
  return {
    range: new vscode.Range(line, col, line, f.line === null ? col : col + 1),
    entry: f.entry,
    line: f.line,
    column: f.column,
    pointer: f.pointer,
    severity: f.severity,
    message: diagnosticMessage(f),
  };
}
