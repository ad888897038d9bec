// The project file (`shardwise.json`) in the editor: the nearest one above a data file, up to its
// workspace folder or repository root, read through the workspace file system. Its settings win
// over VS Code's, so the editor gives the verdicts `shardwise check` gives in CI.

import * as vscode from 'vscode';
import { PROJECT_FILE, matchGlobMap, overlayValues, parseProjectFile, type ProjectFile } from '../engine/project.js';
import type { HostSettings } from './settings.js';
import { homedir } from 'node:os';
import { resolveTokenizerValue } from '../engine/tokens/kinds.js';

async function exists(uri: vscode.Uri): Promise<boolean> {
  try {
    await vscode.workspace.fs.stat(uri);
    return true;
  } catch {
    return false;
  }
}

/** The project file that governs a data file, or null; throws a clear Error for a broken one. */
export async function findProjectFile(uri: vscode.Uri): Promise<(ProjectFile & { dirUri: vscode.Uri }) | null> {
  const root = vscode.workspace.getWorkspaceFolder(uri)?.uri;
  let dir = vscode.Uri.joinPath(uri, '..');
  for (let depth = 0; depth < 64; depth++) {
    const candidate = vscode.Uri.joinPath(dir, PROJECT_FILE);
    if (await exists(candidate)) {
      const text = new TextDecoder().decode(await vscode.workspace.fs.readFile(candidate));
      return { ...parseProjectFile(candidate.fsPath || candidate.toString(), dir.fsPath || dir.path, text), dirUri: dir };
    }
    if ((root && dir.toString() === root.toString()) || (await exists(vscode.Uri.joinPath(dir, '.git')))) return null;
    const up = vscode.Uri.joinPath(dir, '..');
    if (up.toString() === dir.toString()) return null;
    dir = up;
  }
  return null;
}

/** Project-file settings that are not applied in Restricted Mode. */
export const HELD_UNTIL_TRUSTED = ['schemas', 'tokens.tokenizer', 'lines.maxMiB'];

/** Lays the project file's settings over the VS Code settings of one shard. */
export async function applyProjectFile(out: HostSettings, uri: vscode.Uri): Promise<void> {
  let project: (ProjectFile & { dirUri: vscode.Uri }) | null;
  try {
    project = await findProjectFile(uri);
  } catch (err) {
    out.projectProblem = vscode.l10n.t('The project file could not be used: {0}', (err as Error).message);
    return;
  }
  if (!project) return;
  out.projectFile = project.path;
  // Restricted Mode: what points at files or shapes resource use waits for trust (the manifest's
  // restrictedConfigurations hold the same settings back from the workspace's settings.json).
  const held = vscode.workspace.isTrusted ? [] : HELD_UNTIL_TRUSTED.filter((k) => project!.values[k] !== undefined);
  if (held.length) {
    project = { ...project, values: Object.fromEntries(Object.entries(project.values).filter(([k]) => !held.includes(k))) };
    out.trustNote = vscode.l10n.t('This folder is not trusted: {0} from {1} wait until it is.', held.join(', '), project.path);
  }
  overlayValues(out.config, project.values);
  const tokenizer = project.values['tokens.tokenizer'];
  if (typeof tokenizer === 'string') {
    try {
      out.config.tokenizer = resolveTokenizerValue(tokenizer, project.dir, homedir());
      out.tokenizerProblem = undefined;
    } catch (err) {
      out.tokenizerProblem = `${project.path}: ${(err as Error).message}`;
    }
  }
  const base = uri.path.split('/').pop() ?? '';
  const rel = relativeTo(project.dir, uri.fsPath || uri.path);
  const layout = matchGlobMap(project.values['layout.byGlob'] as Record<string, string> | undefined, rel, base);
  if (layout) out.config.layout = { ...out.config.layout, id: layout[1] };
  const schema = matchGlobMap(project.values.schemas as Record<string, string> | undefined, rel, base);
  if (schema) {
    // Relative to the project file's own folder, on whatever file system it is.
    const schemaUri = schema[1].startsWith('/') ? vscode.Uri.file(schema[1]) : vscode.Uri.joinPath(project.dirUri, schema[1].replace(/^\.\//, ''));
    try {
      const bytes = await vscode.workspace.fs.readFile(schemaUri);
      out.config.schema = { source: schemaUri.fsPath || schemaUri.toString(), schema: JSON.parse(new TextDecoder().decode(bytes)) };
      out.schemaProblem = undefined;
    } catch (err) {
      out.schemaProblem = `The JSON Schema mapped to ${base} by "${schema[0]}" in ${project.path} (${schema[1]}) could not be loaded: ${(err as Error).message}`;
    }
  }
}

function relativeTo(dir: string, path: string): string {
  const d = dir.replace(/\/+$/, '') + '/';
  return path.startsWith(d) ? path.slice(d.length) : path.split('/').pop() ?? path;
}
