// Maps VS Code settings (shardwise.*) onto the engine's CheckConfig for one shard.

import * as vscode from 'vscode';
import { withDefaults, type CheckConfig } from '../engine/config.js';
import { SETTINGS, checkValue } from '../engine/project.js';
import { globToRegExp } from '../engine/globs.js';
import { LAYOUT_IDS } from '../engine/layouts/index.js';
import { tokenizerSetting } from './tokenizerSetting.js';
import { applyProjectFile } from './projectFile.js';
import { heldInFolderSettings } from './trustNote.js';
import type { LayoutConfig, LayoutFields } from '../engine/layouts/layout.js';

export const SECTION = 'shardwise';

const MIB = 1024 * 1024;

/** The settings the manifest declares as restricted configurations (read from user settings only until trust). */
const RESTRICTED = ['schemas', 'tokens.tokenizer', 'tokens.tokenizerByGlob', 'workers', 'lines.maxMiB', 'textEditor.maxMiB', 'virtualFiles.maxMiB'];

/** A number setting kept inside the bounds the manifest declares (a hand-edited settings.json can hold anything). */
export function clamp(v: unknown, min: number, max: number, fallback: number): number {
  const n = typeof v === 'number' && Number.isFinite(v) ? Math.round(v) : fallback;
  return Math.min(max, Math.max(min, n));
}

export interface HostSettings {
  config: CheckConfig;
  /** A clear message when the mapped schema could not be loaded. */
  schemaProblem?: string;
  /** A clear message when the tokenizer setting names no usable tokenizer. */
  tokenizerProblem?: string;
  /** The project file (shardwise.json) whose settings apply, and a clear message when it is broken. */
  projectFile?: string;
  projectProblem?: string;
  /** In Restricted Mode: which workspace settings wait for trust, in one line. */
  trustNote?: string;
  maxProblems: number;
  workers: number;
  /** Files larger than this open in a read-only line document instead of the text editor. */
  textEditorMaxBytes: number;
  /** Files reached through a non-file scheme are copied up to this size. */
  virtualFileMaxBytes: number;
  /** A read that makes no progress this long is stopped with a finding (0: never). */
  stallSeconds: number;
}

export async function settingsFor(uri: vscode.Uri): Promise<HostSettings> {
  const s = vscode.workspace.getConfiguration(SECTION, uri);
  const config = configFromEditor(s);
  config.layout = layoutFor(s, uri);
  const out: HostSettings = {
    config,
    maxProblems: clamp(s.get<number>('problems.max', 1000), 1, 100_000, 1000),
    workers: clamp(s.get<number>('workers', 0), 0, 64, 0),
    textEditorMaxBytes: clamp(s.get<number>('textEditor.maxMiB', 50), 1, 4096, 50) * MIB,
    virtualFileMaxBytes: clamp(s.get<number>('virtualFiles.maxMiB', 512), 1, 65536, 512) * MIB,
    stallSeconds: clamp(s.get<number>('reading.stallSeconds', 10), 0, 86400, 10),
  };
  const schemas = s.get<Record<string, string>>('schemas', {});
  const folder = vscode.workspace.getWorkspaceFolder(uri);
  const rel = folder ? vscode.workspace.asRelativePath(uri, false) : uri.path.split('/').pop() ?? '';
  const base = uri.path.split('/').pop() ?? '';
  const tok = tokenizerSetting(s, folder?.uri.fsPath || vscode.Uri.joinPath(uri, '..').fsPath, base, (g) => globToRegExp(g).test(rel) || globToRegExp(g).test(base));
  if (tok.tokenizer) out.config.tokenizer = tok.tokenizer;
  if (tok.problem) out.tokenizerProblem = tok.problem;
  for (const [glob, schemaPath] of Object.entries(schemas)) {
    const re = globToRegExp(glob);
    if (!re.test(rel) && !re.test(base)) continue;
    const schemaUri = resolveSchemaUri(schemaPath, folder, uri);
    try {
      const bytes = await vscode.workspace.fs.readFile(schemaUri);
      out.config.schema = { source: schemaUri.fsPath || schemaUri.toString(), schema: JSON.parse(new TextDecoder().decode(bytes)) };
    } catch (err) {
      out.schemaProblem = `The JSON Schema mapped to ${base} by "shardwise.schemas" (${schemaPath}) could not be loaded: ${(err as Error).message}`;
    }
    break;
  }
  if (!vscode.workspace.isTrusted) {
    const held = RESTRICTED.filter((k) => {
      const i = s.inspect(k);
      return i?.workspaceValue !== undefined || i?.workspaceFolderValue !== undefined;
    });
    if (!held.length && folder) held.push(...(await heldInFolderSettings(folder.uri, SECTION, RESTRICTED)));
    if (held.length) out.trustNote = vscode.l10n.t('This folder is not trusted: its {0} wait until it is; user settings apply meanwhile.', held.map((k) => `shardwise.${k}`).join(', '));
  }
  await applyProjectFile(out, uri);
  return out;
}

/**
 * The engine's configuration from the editor's settings, through the same declarations the project
 * file and the CLI use (`SETTINGS`): every declared setting the manifest contributes is read and
 * checked; a hand-edited value out of bounds is clamped, another unusable one keeps the default.
 * The settings that name files or depend on the file's path are read by their own code below.
 */
export function configFromEditor(s: Pick<vscode.WorkspaceConfiguration, 'get'>): CheckConfig {
  const config = withDefaults();
  for (const spec of SETTINGS) {
    if (!spec.apply || spec.editorReadsItself) continue;
    // Unset and not contributed by the manifest (the CI gate's settings, rule levels): the project file's alone.
    let v = s.get<unknown>(spec.key);
    if (v === undefined) continue;
    if (spec.type === 'integer' && typeof v === 'number' && Number.isFinite(v)) v = clamp(v, spec.min ?? Number.MIN_SAFE_INTEGER, spec.max ?? Number.MAX_SAFE_INTEGER, 0);
    try {
      spec.apply(config, checkValue(spec, v, (m) => new Error(m)));
    } catch {
      // An unusable value (a wrong type in settings.json): the default stays.
    }
  }
  return config;
}

/** The layout for this file: the first `layout.byGlob` entry whose glob matches, else `layout.default`. */
function layoutFor(s: vscode.WorkspaceConfiguration, uri: vscode.Uri): LayoutConfig {
  const rel = vscode.workspace.getWorkspaceFolder(uri) ? vscode.workspace.asRelativePath(uri, false) : '';
  const base = uri.path.split('/').pop() ?? '';
  let id = s.get<string>('layout.default', 'auto');
  for (const [glob, layout] of Object.entries(s.get<Record<string, string>>('layout.byGlob', {}))) {
    const re = globToRegExp(glob);
    if (re.test(rel) || re.test(base)) {
      id = layout;
      break;
    }
  }
  if (id !== 'auto' && !LAYOUT_IDS.includes(id)) id = 'auto';
  const raw = s.get<Record<string, unknown>>('layout.fields', {});
  const list = (v: unknown) => (Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string') : typeof v === 'string' ? [v] : undefined);
  const fields: LayoutFields = {};
  for (const k of ['turns', 'role', 'content'] as const) {
    const v = list(raw?.[k]);
    if (v?.length) fields[k] = v;
  }
  return { id, fields };
}

function resolveSchemaUri(p: string, folder: vscode.WorkspaceFolder | undefined, file: vscode.Uri): vscode.Uri {
  if (p.startsWith('/') || /^[a-zA-Z]:[\\/]/.test(p)) return vscode.Uri.file(p);
  const base = folder?.uri ?? vscode.Uri.joinPath(file, '..');
  return vscode.Uri.joinPath(base, p.replace(/^\.\//, ''));
}
