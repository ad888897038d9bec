// "Open at line": the text editor at a finding's exact line and column; for a file too large for
// the text editor (or compressed, or columnar), a read-only document holding just that record.

import * as vscode from 'vscode';
import { stat } from 'node:fs/promises';
import { locatePointer } from '../engine/json/locate.js';
import type { Finding } from '../engine/findings.js';
import type { ShardDocument } from './shardDocument.js';

export const RECORD_TEXT_SCHEME = 'shardwise-record';

/** Holds the text of single records opened read-only, keyed by URI. */
export class RecordTextProvider implements vscode.TextDocumentContentProvider {
  private readonly texts = new Map<string, string>();
  private readonly changed = new vscode.EventEmitter<vscode.Uri>();
  readonly onDidChange = this.changed.event;

  put(uri: vscode.Uri, text: string): void {
    this.texts.set(uri.toString(), text);
    this.changed.fire(uri);
  }

  provideTextDocumentContent(uri: vscode.Uri): string {
    return this.texts.get(uri.toString()) ?? '';
  }
}

export const recordTexts = new RecordTextProvider();

function isPlainText(name: string): boolean {
  return /\.(jsonl|ndjson|json)$/i.test(name);
}

export async function openAtFinding(doc: ShardDocument, entry: number, finding?: Finding, pointer?: string): Promise<vscode.TextEditor | undefined> {
  const [e] = await doc.session!.read(entry, entry + 1);
  if (!e) throw new Error(`entry ${entry} is not in this shard`);
  const line = finding?.line ?? e.line;
  let column = finding?.column ?? null;
  const ptr = finding?.pointer ?? pointer;
  if (column === null && ptr && e.text !== undefined) column = locatePointer(e.text, ptr)?.column ?? null;
  column = column ?? 1;

  let size = Infinity;
  if (doc.uri.scheme === 'file') size = (await stat(doc.uri.fsPath).catch(() => ({ size: Infinity }))).size;
  if (line !== null && isPlainText(doc.fileName) && size <= doc.settings.textEditorMaxBytes) {
    const pos = new vscode.Position(line - 1, column - 1);
    // Beside the record view, never instead of it (a preview tab would replace the record view's own preview tab).
    return vscode.window.showTextDocument(doc.uri, { selection: new vscode.Range(pos, pos), preview: true, viewColumn: vscode.ViewColumn.Beside });
  }

  // Large, compressed or columnar: a read-only document with just this record.
  let text: string;
  let cursor: vscode.Position;
  if (e.text !== undefined && line !== null) {
    text = e.text;
    const beforeCursor = text.slice(0, column - 1).split('\n');
    cursor = new vscode.Position(beforeCursor.length - 1, beforeCursor[beforeCursor.length - 1].length);
  } else {
    text = JSON.stringify(e.value, null, 2) ?? '';
    const at = ptr ? locatePointer(text, ptr) : null;
    const offset = at ? at.column - 1 : 0;
    const before = text.slice(0, offset).split('\n');
    cursor = new vscode.Position(before.length - 1, before[before.length - 1].length);
  }
  const label = line !== null ? `line ${line}` : `row ${e.record ?? entry}`;
  const uri = vscode.Uri.from({
    scheme: RECORD_TEXT_SCHEME,
    path: `/${doc.fileName} — ${label}.json`,
    query: `entry=${entry}&src=${encodeURIComponent(doc.uri.toString())}`,
  });
  recordTexts.put(uri, text);
  const td = await vscode.workspace.openTextDocument(uri);
  return vscode.window.showTextDocument(td, { selection: new vscode.Range(cursor, cursor), preview: true, viewColumn: vscode.ViewColumn.Beside });
}
