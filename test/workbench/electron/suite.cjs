// Runs inside the desktop extension host: opens the demo chat shard in the record view and checks
// the Problems entries against the JSON Lines rules (a blank line or a line JSON.parse rejects is a finding).
const vscode = require('vscode');
const { readFileSync } = require('node:fs');
const { join } = require('node:path');

async function waitFor(what, fn, ms = 60000) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    const v = await fn();
    if (v) return v;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`timed out waiting for ${what}`);
}

exports.run = async function run() {
  const folder = vscode.workspace.workspaceFolders?.[0]?.uri;
  if (!folder) throw new Error('no workspace folder open');
  await vscode.extensions.getExtension('shardwise.shardwise')?.activate();
  const commands = await vscode.commands.getCommands(true);
  for (const id of ['shardwise.openRecordView', 'shardwise.chooseEncoding', 'shardwise.showReport']) {
    if (!commands.includes(id)) throw new Error(`command ${id} is not registered`);
  }
  const uri = vscode.Uri.joinPath(folder, 'chat-sft.jsonl');
  await vscode.commands.executeCommand('vscode.openWith', uri, 'shardwise.recordView');
  // JSON Lines (jsonlines.org) with JSON.parse as the RFC 8259 parser.
  const lines = readFileSync(join(folder.fsPath, 'chat-sft.jsonl'), 'utf8').split('\n');
  if (lines[lines.length - 1] === '') lines.pop();
  const broken = lines.filter((l) => { if (l.trim() === '') return true; try { JSON.parse(l); return false; } catch { return true; } }).length;
  const diags = await waitFor('Problems entries for chat-sft.jsonl', () => {
    const d = vscode.languages.getDiagnostics(uri);
    return d.length >= broken ? d : null;
  });
  if (diags.length < broken) throw new Error(`${diags.length} Problems entries, expected at least ${broken}`);
};
