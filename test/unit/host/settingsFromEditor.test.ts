// The editor's settings reach the engine through the same declarations as the project file and the
// CLI (SETTINGS: the checks' own and the core's). The fake configuration below answers like VS
// Code's WorkspaceConfiguration: `get` gives the user's value, else the manifest's default;
// `inspect` gives the manifest's default for a contributed key only.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { SETTINGS, configFromValues } from '../../../src/engine/project';
import { projectRoot } from '../helpers/build';

vi.mock('vscode', () => ({}));
const { configFromEditor } = await import('../../../src/host/settings');

const props: Record<string, { default?: unknown }> = JSON.parse(readFileSync(join(projectRoot, 'package.json'), 'utf8')).contributes.configuration.properties;

function editorSettings(user: Record<string, unknown>) {
  const declared = (k: string) => props[`shardwise.${k}`];
  return {
    get: <T>(k: string): T | undefined => (k in user ? user[k] : declared(k)?.default) as T | undefined,
    inspect: <T>(k: string) => (declared(k) ? { key: k, defaultValue: declared(k)!.default as T } : undefined),
  } as never;
}

describe('editor settings through the declarations', () => {
  it('gives the engine defaults when nothing is set (the manifest defaults agree with the engine)', () => {
    expect(configFromEditor(editorSettings({}))).toEqual(configFromValues({}));
  });

  it('reads a value the way the project file does', () => {
    const values = { 'tokens.contextLength': 4096, 'chat.requireConversation': 'always', 'chat.roles': ['human', 'gpt'], 'lines.maxMiB': 2, 'text.fields': ['body'] };
    const fromEditor = configFromEditor(editorSettings(values));
    expect(fromEditor).toEqual(configFromValues(values));
    expect(fromEditor.chat.requireConversation).toBe(true);
    expect(fromEditor.maxLineBytes).toBe(2 * 1024 * 1024);
  });

  it('clamps a number out of bounds and keeps the default for a value of the wrong type', () => {
    const c = configFromEditor(editorSettings({ 'tokens.contextLength': 1e12, 'chat.roles': 'user' }));
    expect(c.contextLength).toBe(100_000_000);
    expect(c.chat.roles).toEqual(configFromValues({}).chat.roles);
  });

  it('leaves no declared setting unread: each is contributed, read by its own code, or the project file’s alone', () => {
    const projectOnly = new Set(['rules', 'checks', 'check.failOn', 'check.maxFindings']);
    // Each exception is a declared setting that the editor indeed does not contribute.
    for (const key of projectOnly) {
      expect(SETTINGS.some((s) => s.key === key), key).toBe(true);
      expect(props[`shardwise.${key}`], key).toBeUndefined();
    }
    for (const spec of SETTINGS) if (!projectOnly.has(spec.key)) expect(props[`shardwise.${spec.key}`], spec.key).toBeDefined();
  });
});
