// `--checks` (and the project file's `checks`): only the named record checks run; the reading
// rules always do. Expectations come from the records written here.
import { describe, expect, it } from 'vitest';
import { put, shardwise, useGate } from './gateHelpers';
import { ALL_CHECKS, CHECK_NAMES } from '../../../src/engine/checks/index';

useGate();

const lines = [
  JSON.stringify({ id: 1, messages: [{ role: 'user', content: 'My chain skips under load.' }, { role: 'user', content: 'Still there?' }] }),
  '{"id": 2, "messages": [',
  JSON.stringify({ id: 3, messages: [{ role: 'user', content: 'Tubeless sealant?' }, { role: 'assistant', content: 'Top up every three months.' }] }),
];
const schema = JSON.stringify({ type: 'object', required: ['source'] });

describe('choosing the record checks', () => {
  it('the names the option takes are the checks the engine runs, each name unique and each check with rules of its own', () => {
    expect(new Set(CHECK_NAMES).size).toBe(ALL_CHECKS.length);
    for (const c of ALL_CHECKS) expect(c.rules.length, c.name).toBeGreaterThan(0);
  });

  it('--checks chat runs the chat check alone: no schema finding, no token counted, the broken line still reported', async () => {
    const shard = put('checks/a.jsonl', lines.join('\n') + '\n');
    const schemaFile = put('checks/schema.json', schema);
    const all = JSON.parse((await shardwise(['check', shard, '--schema', schemaFile, '--format', 'json', '--in-thread', '--fail-on', 'never'])).out);
    const byRule = (doc: { files: Array<{ findingsByRule: Record<string, number> }> }) => Object.keys(doc.files[0].findingsByRule).sort();
    expect(byRule(all).some((r) => r.startsWith('schema'))).toBe(true);
    expect(all.files[0].tokens.total).toBeGreaterThan(0);
    const chat = JSON.parse((await shardwise(['check', shard, '--schema', schemaFile, '--checks', 'chat', '--format', 'json', '--in-thread', '--fail-on', 'never'])).out);
    expect(byRule(chat).some((r) => r.startsWith('schema'))).toBe(false);
    expect(byRule(chat)).toContain('json-syntax');
    expect(byRule(chat).some((r) => r.startsWith('chat'))).toBe(true);
    expect(chat.files[0].tokens.total).toBe(0);
    expect(chat.files[0].records).toBe(2);
  });

  it('an unknown check name is a usage error that lists the names', async () => {
    const shard = put('checks/b.jsonl', lines[0] + '\n');
    const r = await shardwise(['check', shard, '--checks', 'chat,spelling']);
    expect(r.code).toBe(2);
    expect(r.err).toContain('spelling');
    expect(r.err).toContain(CHECK_NAMES.join(', '));
  });
});
