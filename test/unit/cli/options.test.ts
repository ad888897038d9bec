// The command line's options come from the settings' own declarations: every setting a CI run can
// need has a flag, no flag is declared twice, and each flag's value goes through the same checks as
// the project file's (bounds, enum values), so a flag and the project file mean the same thing.
import { describe, expect, it } from 'vitest';
import { OPTIONS, parseCommandLine, UsageError, verbHelp, type Parsed } from '../../../src/cli/options.js';
import { SETTINGS } from '../../../src/engine/project.js';

const parse = (...args: string[]) => parseCommandLine(['check', 'shard.jsonl', ...args]) as Parsed;

describe('options declared with the settings', () => {
  it('every setting except the glob maps has a flag; every flag and alias is unique', () => {
    const flagged = new Set(OPTIONS.flatMap((o) => (o.setting ? [o.setting] : [])));
    // The glob maps (file glob → layout or schema) are the project file's: a flag cannot say which files.
    const projectFileOnly = SETTINGS.filter((s) => !flagged.has(s.key)).map((s) => s.key);
    expect(projectFileOnly.sort()).toEqual(SETTINGS.filter((s) => s.type === 'map' && s.key !== 'rules').map((s) => s.key).sort());
    const names = OPTIONS.flatMap((o) => [o.flag, ...(o.alias ?? [])]);
    expect(names.length - new Set(names).size).toBe(0);
  });

  it('integer settings take their bounds from the declaration, and refuse values outside them', () => {
    for (const spec of SETTINGS.filter((s) => s.type === 'integer')) {
      const flag = spec.cli![0]!.flag;
      const verb = OPTIONS.find((o) => o.flag === flag)!.verbs[0]!;
      const at = (v: number) => (parseCommandLine([verb, 'shard.jsonl', flag, String(v)]) as Parsed).settings[spec.key];
      expect(at(spec.min!), flag).toBe(spec.min);
      expect(at(spec.max!), flag).toBe(spec.max);
      expect(() => at(spec.max! + 1), flag).toThrow(UsageError);
      expect(() => at(spec.min! - 1), flag).toThrow(new RegExp(`${flag} must be between`));
    }
  });

  it('enum settings refuse a value their declaration does not list', () => {
    for (const spec of SETTINGS.filter((s) => s.type === 'enum' && s.cli)) {
      const flag = spec.cli![0]!.flag;
      const verb = OPTIONS.find((o) => o.flag === flag)!.verbs[0]!;
      const first = spec.values!()[0]!;
      expect((parseCommandLine([verb, 'x', flag, first]) as Parsed).settings[spec.key], flag).toBe(first);
      expect(() => parseCommandLine([verb, 'x', flag, 'no-such-value']), flag).toThrow(/must be one of/);
    }
  });

  it('values by type: switches, lists, repeated names and repeated rules', () => {
    const p = parse('--allow-repeated-roles', '--roles', 'user, assistant', '--text-field', 'body', '--text-field', 'note', '--rule', 'a=off', '--rule', 'b=info', '--role-field', 'speaker', '--content-field', 'said', '--role-field', 'who');
    expect(p.settings['chat.allowRepeatedRoles']).toBe(true);
    expect(p.settings['chat.roles']).toEqual(['user', 'assistant']);
    expect(p.settings['text.fields']).toEqual(['body', 'note']);
    expect(p.settings.rules).toEqual({ a: 'off', b: 'info' });
    expect(p.settings['layout.fields']).toEqual({ role: ['speaker', 'who'], content: ['said'] });
    expect(() => parse('--rule', 'nolevel')).toThrow(/--rule takes ID=LEVEL/);
    expect(() => parse('--checks', 'tokens,spelling')).toThrow(/--checks has "spelling"/);
  });

  it('a flag applies only to the verbs its setting names, and help lists it with its setting', () => {
    expect(() => parseCommandLine(['stats', 'x', '--fail-on', 'warning'])).toThrow(/--fail-on does not apply to stats/);
    expect((parseCommandLine(['head', 'x', '--max-line-mib', '2']) as Parsed).settings['lines.maxMiB']).toBe(2);
    expect(() => parseCommandLine(['head', 'x', '--encoding', 'o200k_base'])).toThrow(/does not apply to head/);
    for (const spec of SETTINGS) for (const c of spec.cli ?? []) expect(verbHelp(c.verbs === 'reading' ? 'head' : 'check')).toContain(`${c.flag}`);
    expect(verbHelp('check')).toMatch(/--context-length, --context N +context length in tokens.*\[setting tokens\.contextLength\]/);
  });
});
