// The tokenizer picker: the built-in encodings, model folders already in the model-hub client's
// local cache on this machine (found by looking at the disk only), and a folder the user browses to.

import { homedir } from 'node:os';
import * as vscode from 'vscode';
import { ENCODINGS } from '../engine/config.js';
import { findCachedModels } from '../engine/tokens/hubCache.js';
import { modelFolderProblem } from '../engine/tokens/resolve.js';
import { isEncodingName } from '../engine/tokens/counter.js';

type Item = vscode.QuickPickItem & { value?: string; browse?: true };

export async function chooseTokenizer(section: string, target: vscode.ConfigurationTarget): Promise<void> {
  const cfg = vscode.workspace.getConfiguration(section);
  const current = cfg.get<string>('tokens.tokenizer', '') || cfg.get<string>('tokens.encoding', 'cl100k_base');
  const mark = (v: string) => (v === current ? 'current' : undefined);
  const items: Item[] = [
    { label: 'Built-in encodings', kind: vscode.QuickPickItemKind.Separator },
    ...ENCODINGS.map((e): Item => ({ label: e, value: e, description: mark(e) })),
  ];
  const cached = findCachedModels(process.env, homedir());
  if (cached.length > 0) {
    items.push({ label: 'Models in the local model-hub cache', kind: vscode.QuickPickItemKind.Separator });
    for (const m of cached) items.push({ label: m.label, value: m.folder, description: mark(m.folder) ?? (m.current ? 'branch revision' : undefined), detail: m.folder });
  }
  items.push({ label: '', kind: vscode.QuickPickItemKind.Separator }, { label: '$(folder-opened) Browse for a model folder…', browse: true });
  const pick = await vscode.window.showQuickPick(items, { title: 'Tokenizer for token counts, chat templates and context checks', matchOnDetail: true });
  if (!pick) return;
  let value = pick.value;
  if (pick.browse) {
    const chosen = await vscode.window.showOpenDialog({ canSelectFolders: true, canSelectFiles: false, canSelectMany: false, title: 'A model folder holding tokenizer.json', openLabel: 'Count with this model' });
    if (!chosen?.length) return;
    value = chosen[0]!.fsPath;
    const problem = modelFolderProblem(value);
    if (problem) return void vscode.window.showErrorMessage(`Shardwise: ${problem}.`);
  }
  if (value === undefined) return;
  if (isEncodingName(value)) {
    await cfg.update('tokens.encoding', value, target);
    // A model folder set at another level would still win: name the encoding there too, else clear it here.
    const t = cfg.inspect<string>('tokens.tokenizer');
    const elsewhere = [t?.globalValue, t?.workspaceValue, t?.workspaceFolderValue].some((v) => typeof v === 'string' && v !== '');
    await cfg.update('tokens.tokenizer', elsewhere ? value : undefined, target);
  } else {
    await cfg.update('tokens.tokenizer', value, target);
  }
}
