// Which restricted settings a folder's own settings file sets. In Restricted Mode VS Code leaves a
// restricted configuration's workspace value out of the configuration altogether (`inspect` does
// not show it either), so the note saying what waits for trust reads the folder's
// `.vscode/settings.json` itself — only to name the keys, never to apply them.

import * as vscode from 'vscode';

/** The keys of `restricted` (without the section) that the folder's `.vscode/settings.json` sets. */
export async function heldInFolderSettings(folder: vscode.Uri, section: string, restricted: readonly string[]): Promise<string[]> {
  let text: string;
  try {
    text = new TextDecoder().decode(await vscode.workspace.fs.readFile(vscode.Uri.joinPath(folder, '.vscode', 'settings.json')));
  } catch {
    return [];
  }
  // JSON with comments: the file's keys are its quoted names followed by a colon.
  const keys = new Set([...text.matchAll(/"((?:[^"\\]|\\.)*)"\s*:/g)].map((m) => m[1]));
  return restricted.filter((k) => keys.has(`${section}.${k}`));
}
