// The schema check's own behaviour. Validation outcomes come from JSON Schema 2020-12 and draft-07
// (json-schema.org) as implemented by ajv from the npm registry; messages are our own wording.

import { describe, expect, it } from 'vitest';
import { compileSchema, schemaCheck, schemaDraft, MAX_ISSUES_PER_RECORD } from '../../../../src/engine/checks/schema.js';
import type { RecordIssue } from '../../../../src/engine/findings.js';
import { withDefaults, type CheckConfig } from '../../../../src/engine/config.js';

const chatSchema = {
  type: 'object',
  required: ['messages'],
  properties: {
    messages: { type: 'array', minItems: 1, items: { type: 'object', required: ['role', 'content'], properties: { role: { enum: ['user', 'assistant'] }, content: { type: 'string' } } } },
    source: { type: 'string' },
  },
  additionalProperties: false,
};

function runCheck(value: unknown, config: CheckConfig): RecordIssue[] {
  const out = { issues: [] as RecordIssue[] };
  schemaCheck.checkRecord({ record: 0, value }, config, out);
  return out.issues;
}

describe('compileSchema', () => {
  const validate = compileSchema(chatSchema, 'test schema');

  it('accepts a matching record', () => {
    expect(validate({ messages: [{ role: 'user', content: 'Spoke snapped' }] })).toEqual([]);
  });

  it('required: points at the parent object (RFC 6901)', () => {
    expect(validate({})).toEqual([{ rule: 'schema-violation', message: 'missing required property "messages"', pointer: '' }]);
    expect(validate({ messages: [{ role: 'user' }] })).toEqual([{ rule: 'schema-violation', message: 'missing required property "content"', pointer: '/messages/0' }]);
  });

  it('type: names the expected and the found type', () => {
    expect(validate({ messages: [{ role: 'user', content: 5 }] })).toEqual([{ rule: 'schema-violation', message: 'expected string, got an integer', pointer: '/messages/0/content' }]);
  });

  it('additionalProperties: points at the extra property, escaped per RFC 6901', () => {
    expect(validate({ messages: [{ role: 'user', content: 'x' }], 'a/b~c': 1 })).toEqual([
      { rule: 'schema-violation', message: 'property "a/b~c" is not allowed here', pointer: '/a~1b~0c' },
    ]);
  });

  it('reports every error (allErrors)', () => {
    const issues = validate({ messages: [{ role: 'robot', content: 1 }], extra: true });
    expect(issues.map((i) => i.pointer).sort()).toEqual(['/extra', '/messages/0/content', '/messages/0/role']);
  });

  it('caps the issues of one record', () => {
    const v = compileSchema({ type: 'array', items: { type: 'string' } }, 'cap');
    const issues = v(Array.from({ length: 500 }, (_, i) => i));
    expect(issues).toHaveLength(MAX_ISSUES_PER_RECORD + 1);
    expect(issues[MAX_ISSUES_PER_RECORD].message).toContain('400 more');
  });

  it('picks the draft from $schema: draft-07 array items differ from 2020-12', () => {
    // Draft-07 §9.3.1.1: an array-valued "items" validates by position; 2020-12 replaced that with "prefixItems".
    const d7 = compileSchema({ $schema: 'http://json-schema.org/draft-07/schema#', items: [{ type: 'string' }], additionalItems: false }, 'd7');
    expect(d7(['a'])).toEqual([]);
    expect(d7(['a', 'b'])).toHaveLength(1);
    expect(schemaDraft({}, 's')).toBe('2020-12');
    expect(schemaDraft({ $schema: 'https://json-schema.org/draft/2019-09/schema' }, 's')).toBe('2019-09');
    expect(schemaDraft({ $schema: 'http://json-schema.org/draft-06/schema#' }, 's')).toBe('draft-06');
  });

  it('rejects an unsupported draft and an invalid schema with an error naming the source', () => {
    expect(() => compileSchema({ $schema: 'http://json-schema.org/draft-04/schema#' }, 'shard.schema.json')).toThrow(/shard\.schema\.json.*not supported/);
    expect(() => compileSchema({ type: 'text' }, 'shard.schema.json')).toThrow(/shard\.schema\.json/);
    expect(() => compileSchema({ $ref: '#/$defs/missing' }, 'shard.schema.json')).toThrow(/shard\.schema\.json.*does not compile/);
    expect(() => compileSchema('not a schema', 'shard.schema.json')).toThrow(/must be an object or a boolean/);
  });

  it('a record key "toString" or "__proto__" is not taken from Object.prototype', () => {
    const v = compileSchema({ required: ['toString'] }, 'own');
    expect(v({})).toHaveLength(1);
    expect(v(JSON.parse('{"toString": 1}'))).toEqual([]);
  });

  it('reports instead of crashing on a record deeper than the stack', () => {
    const v = compileSchema({ $defs: { n: { type: 'array', items: { $ref: '#/$defs/n' } } }, $ref: '#/$defs/n' }, 'deep');
    let deep: unknown[] = [];
    for (let i = 0; i < 200_000; i++) deep = [deep];
    const issues = v(deep);
    expect(issues).toHaveLength(1);
    expect(issues[0].message).toMatch(/could not finish/);
  });
});

describe('schemaCheck', () => {
  it('does nothing without a schema', () => {
    expect(runCheck({ anything: 1 }, withDefaults({ schema: null }))).toEqual([]);
  });

  it('prepare throws a clear error naming the source', () => {
    expect(() => schemaCheck.prepare!(withDefaults({ schema: { source: 'settings: shardwise.schema', schema: { type: 42 } } }))).toThrow(/settings: shardwise\.schema/);
  });

  it('validates records with the prepared schema and recompiles when it changes', () => {
    const c1 = withDefaults({ schema: { source: 's1', schema: chatSchema } });
    schemaCheck.prepare!(c1);
    expect(runCheck({}, c1)).toMatchObject([{ rule: 'schema-violation', pointer: '' }]);
    const c2 = withDefaults({ schema: { source: 's2', schema: { type: 'object' } } });
    schemaCheck.prepare!(c2);
    expect(runCheck({}, c2)).toEqual([]);
  });
});
