// The manifest against the platform's rules (VS Code's extension guidelines and contribution-point
// reference, from memory): scopes and bounds on settings, commands hidden where they do not
// apply, input-asking titles ending in "…", every user-visible string through package.nls.json,
// workspace trust and virtual workspaces declared.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { projectRoot } from './helpers/build';

const pkg = JSON.parse(readFileSync(join(projectRoot, 'package.json'), 'utf8'));
const nls: Record<string, string> = JSON.parse(readFileSync(join(projectRoot, 'package.nls.json'), 'utf8'));
const props: Record<string, Record<string, unknown>> = pkg.contributes.configuration.properties;

describe('settings', () => {
  for (const [key, spec] of Object.entries(props)) {
    it(`${key}: scope, order, description, bounds`, () => {
      expect(['application', 'machine', 'machine-overridable', 'window', 'resource', 'language-overridable']).toContain(spec.scope);
      expect(typeof spec.order).toBe('number');
      expect(spec.description ?? spec.markdownDescription).toBeDefined();
      if (spec.type === 'integer' || spec.type === 'number') {
        expect(typeof spec.minimum, 'minimum').toBe('number');
        expect(typeof spec.maximum, 'maximum').toBe('number');
        expect(spec.default as number).toBeGreaterThanOrEqual(spec.minimum as number);
        expect(spec.default as number).toBeLessThanOrEqual(spec.maximum as number);
      }
      if (Array.isArray(spec.enum)) expect((spec.enumDescriptions as unknown[])?.length, 'enumDescriptions').toBe(spec.enum.length);
      // Byte sizes are given in MiB.
      expect(key).not.toMatch(/Bytes$/);
    });
  }
  it('the everyday settings come first: tokenizer, context length, schemas', () => {
    const byOrder = Object.entries(props).sort((a, b) => (a[1].order as number) - (b[1].order as number)).map(([k]) => k);
    expect(byOrder.slice(0, 5)).toEqual(expect.arrayContaining(['shardwise.tokens.tokenizer', 'shardwise.tokens.contextLength', 'shardwise.schemas']));
  });
  it('what differs per folder is resource-scoped; workers may differ per machine', () => {
    for (const k of ['tokens.tokenizer', 'tokens.contextLength', 'chat.roles', 'text.fields', 'schemas', 'lines.maxMiB']) expect(props[`shardwise.${k}`].scope, k).toBe('resource');
    expect(props['shardwise.workers'].scope).toBe('machine-overridable');
  });
});

describe('commands', () => {
  const palette: { command: string; when?: string }[] = pkg.contributes.menus.commandPalette;
  // Commands that apply wherever the palette is opened, and why.
  const everywhere: Record<string, string> = {
    'shardwise.chooseEncoding': 'sets the tokenizer setting, with or without an open shard',
    'shardwise.setContextLength': 'sets the context-length setting, with or without an open shard',
    'shardwise.showReport': 'opens the side panel, which explains itself when no shard is open',
  };
  for (const cmd of pkg.contributes.commands as { command: string; title: string }[]) {
    it(`${cmd.command}: a when clause in the palette, or a reason to show everywhere`, () => {
      const entry = palette.find((p) => p.command === cmd.command);
      if (everywhere[cmd.command]) expect(entry).toBeUndefined();
      else expect(entry?.when, cmd.command).toBeTruthy();
    });
  }
  it('every command said to apply everywhere is a contributed command', () => {
    const ids = new Set((pkg.contributes.commands as { command: string }[]).map((c) => c.command));
    for (const id of Object.keys(everywhere)) expect(ids.has(id), id).toBe(true);
  });
  it('titles that ask for input end in "…"', () => {
    const title = (id: string) => nls[(pkg.contributes.commands as { command: string; title: string }[]).find((c) => c.command === id)!.title.slice(1, -1)];
    for (const id of ['shardwise.goTo', 'shardwise.chooseEncoding', 'shardwise.setContextLength']) expect(title(id), id).toMatch(/…$/);
    for (const id of ['shardwise.checkAgain', 'shardwise.cancel', 'shardwise.reopenAsText']) expect(title(id), id).not.toMatch(/…$/);
  });
  it('keybindings are active only in the record view', () => {
    for (const k of pkg.contributes.keybindings) expect(k.when).toMatch(/activeCustomEditorId == shardwise\.recordView/);
  });
  it('the editor title switches between the record view and the text editor', () => {
    const title: { command: string; when: string }[] = pkg.contributes.menus['editor/title'];
    expect(title.find((t) => t.command === 'shardwise.reopenAsText')?.when).toMatch(/activeCustomEditorId == shardwise\.recordView/);
    expect(title.find((t) => t.command === 'shardwise.openRecordView')?.when).toMatch(/!\(activeCustomEditorId/);
  });
});

describe('localisation', () => {
  const visible: string[] = [];
  const collect = (v: unknown, path: string) => {
    if (typeof v === 'string') {
      if (/(^|\.)(title|displayName|description|markdownDescription|name|category)$/.test(path) || /enumDescriptions\.\d+$/.test(path)) visible.push(`${path}=${v}`);
    } else if (Array.isArray(v)) v.forEach((x, i) => collect(x, `${path}.${i}`));
    else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) collect(x, path ? `${path}.${k}` : k);
  };
  collect({ displayName: pkg.displayName, description: pkg.description, contributes: pkg.contributes, capabilities: pkg.capabilities }, '');
  it('every user-visible manifest string is a %key% of package.nls.json', () => {
    expect(visible.length).toBeGreaterThan(40);
    for (const v of visible) {
      const s = v.slice(v.indexOf('=') + 1);
      // views[].name and customEditors[].displayName are visible too; ids and paths are not collected.
      expect(s, v).toMatch(/^%[^%]+%$/);
      expect(nls[s.slice(1, -1)], v).toBeTypeOf('string');
    }
  });
  it('package.nls.json holds no key the manifest does not use', () => {
    const used = new Set(visible.map((v) => v.slice(v.indexOf('=') + 2, -1)));
    for (const k of Object.keys(nls)) expect(used.has(k), k).toBe(true);
  });
});

describe('workspace trust and virtual workspaces', () => {
  it('works in Restricted Mode, with the settings that point at files or shape resource use restricted', () => {
    const t = pkg.capabilities.untrustedWorkspaces;
    expect(t.supported).toBe('limited');
    for (const k of ['shardwise.schemas', 'shardwise.tokens.tokenizer', 'shardwise.workers', 'shardwise.lines.maxMiB']) expect(t.restrictedConfigurations).toContain(k);
    for (const k of t.restrictedConfigurations) expect(props[k], k).toBeDefined();
  });
  it('declares what works on a virtual file system', () => {
    expect(pkg.capabilities.virtualWorkspaces.supported).toBe('limited');
    expect(nls[pkg.capabilities.virtualWorkspaces.description.slice(1, -1)]).toMatch(/virtualFiles\.maxMiB/);
  });
});
