// Findings in the Problems panel: those of text shards at line:column, those of Parquet and Arrow
// rows (and of the file as a whole) at the file's start with the row named; capped with one
// summary entry. They stay while the file is open in any editor.

import * as vscode from 'vscode';
import type { Finding, Severity } from '../engine/findings.js';
import type { ShardDocument } from './shardDocument.js';
import { formatPlace } from '../engine/places.js';

const SEVERITY: Record<Severity, vscode.DiagnosticSeverity> = {
  error: vscode.DiagnosticSeverity.Error,
  warning: vscode.DiagnosticSeverity.Warning,
  info: vscode.DiagnosticSeverity.Information,
};

export class ShardDiagnostics {
  readonly collection = vscode.languages.createDiagnosticCollection('shardwise');
  private timers = new Map<ShardDocument, NodeJS.Timeout>();

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
    if (all.length === 0) {
      this.collection.delete(doc.uri);
      return;
    }
    const shown = all.slice(0, max).map((f) => toDiagnostic(f));
    const hidden = doc.tally.totalFindings - shown.length;
    if (hidden > 0) {
      const d = new vscode.Diagnostic(
        new vscode.Range(0, 0, 0, 0),
        `${hidden.toLocaleString(vscode.env.language)} more Shardwise findings are not listed here (limit shardwise.problems.max = ${max}); the Shard Report panel and the CLI list them all.`,
        vscode.DiagnosticSeverity.Information,
      );
      d.source = 'shardwise';
      d.code = 'more-findings';
      shown.push(d);
    }
    this.collection.set(doc.uri, shown);
  }

  clear(doc: ShardDocument): void {
    const t = this.timers.get(doc);
    if (t) clearTimeout(t);
    this.timers.delete(doc);
    this.collection.delete(doc.uri);
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
  }
}

export function diagnosticMessage(f: Finding): string {
  const at = f.pointer ? ` (at ${f.pointer})` : '';
  // A row has no line the panel can point at: the message names it (one formatter: engine/places.ts).
  return f.line === null ? `${formatPlace(f)}: ${f.message}${at}` : `${f.message}${at}`;
}

function toDiagnostic(f: Finding): vscode.Diagnostic {
  const line = Math.max(0, (f.line ?? 1) - 1);
  const col = Math.max(0, (f.column ?? 1) - 1);
  const d = new vscode.Diagnostic(new vscode.Range(line, col, line, f.line === null ? col : col + 1), diagnosticMessage(f), SEVERITY[f.severity]);
  d.source = 'shardwise';
  d.code = f.rule;
  return d;
}
