// Findings of text shards in the Problems panel, at line:column, capped with one summary entry.

import * as vscode from 'vscode';
import type { Finding, Severity } from '../engine/findings.js';
import type { ShardDocument } from './shardDocument.js';

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
    // Only text shards have lines the Problems panel can point at.
    if (doc.info && doc.info.format !== 'jsonl' && doc.info.format !== 'json-array') {
      this.collection.delete(doc.uri);
      return;
    }
    const all = doc.tally.sortedFindings();
    const located = all.filter((f) => f.line !== null);
    if (located.length === 0 && all.length === 0) {
      this.collection.delete(doc.uri);
      return;
    }
    const shown = located.slice(0, max).map((f) => toDiagnostic(f));
    const hidden = doc.tally.totalFindings - shown.length;
    if (hidden > 0) {
      const d = new vscode.Diagnostic(
        new vscode.Range(0, 0, 0, 0),
        `${hidden.toLocaleString()} more Shardwise findings are not listed here (limit shardwise.problems.max = ${max}); the Shard Report panel and the CLI list them all.`,
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

  dispose(): void {
    for (const t of this.timers.values()) clearTimeout(t);
    this.collection.dispose();
  }
}

function toDiagnostic(f: Finding): vscode.Diagnostic {
  const line = Math.max(0, (f.line ?? 1) - 1);
  const col = Math.max(0, (f.column ?? 1) - 1);
  const d = new vscode.Diagnostic(new vscode.Range(line, col, line, col + 1), f.message, SEVERITY[f.severity]);
  d.source = 'shardwise';
  d.code = f.rule;
  return d;
}
