// JSON Schema validation of each record against the user's schema, through ajv.
// Draft 2020-12 unless the schema's `$schema` names another draft ajv can run.

import Ajv from 'ajv';
import Ajv2019 from 'ajv/dist/2019.js';
import Ajv2020 from 'ajv/dist/2020.js';
import type { ErrorObject, Options, ValidateFunction } from 'ajv';
import draft06Meta from 'ajv/dist/refs/json-schema-draft-06.json';
import type { CheckConfig } from '../config.js';
import { joinPointer, splitPointer, type RecordIssue, type RuleInfo } from '../findings.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { PatternBudgetError, compilePattern, withDeadline } from '../text/pattern.js';

export const SCHEMA_RULES: RuleInfo[] = [
  { id: 'schema-violation', family: 'schema', severity: 'error', summary: 'The record does not match the configured JSON Schema.' },
  { id: 'schema-timeout', family: 'schema', severity: 'error', summary: "Validating the record against the JSON Schema ran past its time budget (a pattern that backtracks); the record is not fully checked." },
];

/** Time one record's validation may take; a schema's patterns check it before every match. */
export const SCHEMA_TIME_BUDGET_MS = 1000;

/** ajv's hook for pattern engines (`code.regExp`): linear-time where the pattern allows, interruptible elsewhere. */
const patternEngine = Object.assign((pattern: string, u: string) => compilePattern(pattern, u), { code: 'shardwisePattern' });

/** One record yields at most this many issues: a list of thousands of bad items must not flood the panel. */
export const MAX_ISSUES_PER_RECORD = 100;

export type SchemaDraft = '2020-12' | '2019-09' | 'draft-07' | 'draft-06';

export interface CompileOptions {
  /** Schemas that `$ref` may reach by absolute URI, preloaded so no network is ever needed. */
  remotes?: ReadonlyMap<string, unknown>;
  /** The draft of a schema that names none in `$schema` (2020-12 unless given). */
  defaultDraft?: SchemaDraft;
  /** Milliseconds one record's validation may take (default SCHEMA_TIME_BUDGET_MS). */
  timeBudgetMs?: number;
}

export type RecordValidator = (value: unknown) => RecordIssue[];

const DRAFT_BY_META: ReadonlyMap<string, SchemaDraft> = new Map([
  ['https://json-schema.org/draft/2020-12/schema', '2020-12'],
  ['https://json-schema.org/draft/2019-09/schema', '2019-09'],
  ['http://json-schema.org/draft-07/schema', 'draft-07'],
  ['http://json-schema.org/draft-06/schema', 'draft-06'],
]);

const UNSUPPORTED_META = ['http://json-schema.org/draft-04/schema', 'http://json-schema.org/draft-03/schema'];

function stripHash(uri: string): string {
  return uri.replace(/#$/, '');
}

/** The draft a schema is written in: its `$schema`, or 2020-12 when it names none or one of its own. */
export function schemaDraft(schema: unknown, source: string, defaultDraft: SchemaDraft = '2020-12'): SchemaDraft {
  const meta = typeof schema === 'object' && schema !== null ? (schema as Record<string, unknown>).$schema : undefined;
  if (typeof meta !== 'string') return defaultDraft;
  const bare = stripHash(meta);
  const known = DRAFT_BY_META.get(bare);
  if (known !== undefined) return known;
  if (UNSUPPORTED_META.includes(bare)) {
    throw new Error(`JSON Schema from ${source} is written for ${meta}, which is not supported; use draft-06, draft-07, 2019-09 or 2020-12`);
  }
  // A custom meta-schema (e.g. one that names its vocabularies) builds on the current draft.
  return '2020-12';
}

function makeAjv(draft: SchemaDraft, validateSchema: boolean): Ajv {
  // Formats are annotations unless asked otherwise (JSON Schema 2020-12 §7.2.1), and no format plugin is installed.
  // ownProperties: a record's "toString" or "__proto__" key is its own, never one inherited from Object.prototype.
  const options: Options = { allErrors: true, strict: false, validateFormats: false, logger: false, validateSchema, ownProperties: true, code: { regExp: patternEngine } };
  switch (draft) {
    case '2020-12':
      return new Ajv2020(options);
    case '2019-09':
      return new Ajv2019(options);
    case 'draft-07':
    case 'draft-06': {
      const ajv = new Ajv(options);
      ajv.addMetaSchema(draft06Meta);
      return ajv;
    }
  }
}

/**
 * Compiles a schema once; the returned function gives one issue per ajv error for a record.
 * Throws an Error naming `source` when the schema is not a valid schema or cannot be compiled.
 */
export function compileSchema(schema: unknown, source: string, options: CompileOptions = {}): RecordValidator {
  if (typeof schema !== 'boolean' && (typeof schema !== 'object' || schema === null || Array.isArray(schema))) {
    throw new Error(`JSON Schema from ${source} must be an object or a boolean, not ${describe(schema)}`);
  }
  const draft = schemaDraft(schema, source, options.defaultDraft);
  // Checking a schema against its meta-schema compiles the meta-schema, which is slow: one shared
  // checker per draft does that once. A schema naming a meta-schema of its own is checked by a fresh validator.
  const customMeta = hasCustomMeta(schema);
  if (!customMeta) checkAgainstMeta(schema as object, draft, source);
  const ajv = makeAjv(draft, customMeta);
  let validate: ValidateFunction;
  try {
    for (const [uri, remote] of options.remotes ?? []) {
      // Meta-schemas of other drafts cannot be read by this draft's validator; skip rather than fail.
      if (!remoteFitsDraft(remote, draft)) continue;
      ajv.addSchema(remote as object, uri);
    }
    validate = ajv.compile(schema as object);
  } catch (err) {
    const why = err instanceof Error ? err.message : String(err);
    throw new Error(`JSON Schema from ${source} does not compile (${draft}): ${why}`);
  }
  const budget = options.timeBudgetMs ?? SCHEMA_TIME_BUDGET_MS;
  return (value: unknown): RecordIssue[] => {
    try {
      if (withDeadline(budget, () => validate(value))) return [];
      return issuesFromErrors(validate.errors ?? [], value);
    } catch (err) {
      if (err instanceof PatternBudgetError) {
        return [{ rule: 'schema-timeout', message: `validation stopped after its ${budget} ms budget: the ${err.message.replace(/ ran out of the time budget$/, '')} backtracks too long on this record; the record is not fully checked`, pointer: '' }];
      }
      // A record nested deeper than the call stack, say: report it instead of ending the analysis.
      const why = err instanceof Error ? err.message : String(err);
      return [{ rule: 'schema-violation', message: `validation could not finish: ${why}`, pointer: '' }];
    }
  };
}

/** Drafts whose meta-schemas each validator knows; a remote written for another draft is left out. */
const READABLE_DRAFTS: Record<SchemaDraft, readonly SchemaDraft[]> = {
  '2020-12': ['2020-12'],
  '2019-09': ['2019-09'],
  'draft-07': ['draft-07', 'draft-06'],
  'draft-06': ['draft-07', 'draft-06'],
};

const metaCheckers = new Map<SchemaDraft, Ajv>();

function hasCustomMeta(schema: unknown): boolean {
  const meta = typeof schema === 'object' && schema !== null ? (schema as Record<string, unknown>).$schema : undefined;
  return typeof meta === 'string' && !DRAFT_BY_META.has(stripHash(meta));
}

function checkAgainstMeta(schema: object | boolean, draft: SchemaDraft, source: string): void {
  let checker = metaCheckers.get(draft);
  if (checker === undefined) {
    checker = makeAjv(draft, true);
    metaCheckers.set(draft, checker);
  }
  if (typeof schema === 'boolean') return;
  const ok = checker.validateSchema(schema);
  if (ok !== true) {
    throw new Error(`JSON Schema from ${source} is not a valid ${draft} schema: ${checker.errorsText(checker.errors, { dataVar: 'schema' })}`);
  }
}

function remoteFitsDraft(remote: unknown, draft: SchemaDraft): boolean {
  const meta = typeof remote === 'object' && remote !== null ? (remote as Record<string, unknown>).$schema : undefined;
  if (typeof meta !== 'string') return true;
  const bare = stripHash(meta);
  const known = DRAFT_BY_META.get(bare);
  if (known === undefined) return !UNSUPPORTED_META.includes(bare);
  return READABLE_DRAFTS[draft].includes(known);
}

/** The value an error is about, looked up in the record (ajv keeps it only in its slower verbose mode). */
function valueAt(record: unknown, pointer: string): unknown {
  let cur = record;
  for (const token of splitPointer(pointer)) {
    if (typeof cur !== 'object' || cur === null || !Object.prototype.hasOwnProperty.call(cur, token)) return undefined;
    cur = (cur as Record<string, unknown>)[token];
  }
  return cur;
}

export function issuesFromErrors(errors: readonly ErrorObject[], record: unknown): RecordIssue[] {
  const issues: RecordIssue[] = [];
  for (const e of errors) {
    if (issues.length === MAX_ISSUES_PER_RECORD) {
      issues.push({ rule: 'schema-violation', message: `… and ${errors.length - MAX_ISSUES_PER_RECORD} more schema violations in this record`, pointer: '' });
      break;
    }
    issues.push({ rule: 'schema-violation', message: describeError(e, record), pointer: errorPointer(e) });
  }
  return issues;
}

/** Where the fault sits: ajv's instancePath (already RFC 6901), or the extra property itself. */
function errorPointer(e: ErrorObject): string {
  const p = e.params as Record<string, unknown>;
  if (e.keyword === 'additionalProperties' && typeof p.additionalProperty === 'string') return joinPointer(e.instancePath, p.additionalProperty);
  if (e.keyword === 'unevaluatedProperties' && typeof p.unevaluatedProperty === 'string') return joinPointer(e.instancePath, p.unevaluatedProperty);
  return e.instancePath;
}

function describe(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'an array';
  if (typeof value === 'number') return Number.isInteger(value) ? 'an integer' : 'a number';
  if (typeof value === 'object') return 'an object';
  if (value === undefined) return 'nothing';
  return `a ${typeof value}`;
}

/** Short JSON for a message: escaping keeps an untrusted property name on one line and visibly quoted. */
function show(value: unknown, max = 60): string {
  let s: string;
  try {
    s = JSON.stringify(value) ?? String(value);
  } catch {
    s = String(value);
  }
  return s.length > max ? `${s.slice(0, max)}…` : s;
}

function plural(n: unknown, one: string, many: string): string {
  return `${String(n)} ${n === 1 ? one : many}`;
}

/** Our own wording for each ajv keyword error. */
export function describeError(e: ErrorObject, record: unknown): string {
  const p = e.params as Record<string, unknown>;
  switch (e.keyword) {
    case 'required':
      return `missing required property ${show(p.missingProperty)}`;
    case 'dependentRequired':
    case 'dependencies':
      if (p.missingProperty !== undefined) return `property ${show(p.property)} needs property ${show(p.missingProperty)} too`;
      return `property ${show(p.property)} brings a sub-schema this value does not match`;
    case 'type':
      return `expected ${String(p.type).replace(/,/g, ' or ')}, got ${describe(valueAt(record, e.instancePath))}`;
    case 'additionalProperties':
      return `property ${show(p.additionalProperty)} is not allowed here`;
    case 'unevaluatedProperties':
      return `property ${show(p.unevaluatedProperty)} is not covered by the schema`;
    case 'unevaluatedItems':
      return `items past position ${String(p.limit)} are not covered by the schema`;
    case 'additionalItems':
    case 'items':
      return `at most ${plural(p.limit, 'item is', 'items are')} allowed here`;
    case 'enum':
      return `value is not one of ${show(p.allowedValues)}`;
    case 'const':
      return `value must equal ${show(p.allowedValue)}`;
    case 'minLength':
      return `text is shorter than ${plural(p.limit, 'character', 'characters')}`;
    case 'maxLength':
      return `text is longer than ${plural(p.limit, 'character', 'characters')}`;
    case 'minItems':
      return `list has fewer than ${plural(p.limit, 'item', 'items')}`;
    case 'maxItems':
      return `list has more than ${plural(p.limit, 'item', 'items')}`;
    case 'minProperties':
      return `object has fewer than ${plural(p.limit, 'property', 'properties')}`;
    case 'maxProperties':
      return `object has more than ${plural(p.limit, 'property', 'properties')}`;
    case 'minimum':
    case 'maximum':
    case 'exclusiveMinimum':
    case 'exclusiveMaximum':
      return `number must be ${String(p.comparison)} ${String(p.limit)}`;
    case 'multipleOf':
      return `number must be a multiple of ${String(p.multipleOf)}`;
    case 'pattern':
      return `text does not match the pattern ${show(p.pattern)}`;
    case 'format':
      return `text is not a valid ${show(p.format)}`;
    case 'uniqueItems':
      return `items ${String(p.j)} and ${String(p.i)} are equal; items must be unique`;
    case 'contains':
      return p.maxContains !== undefined
        ? `list must hold between ${String(p.minContains)} and ${String(p.maxContains)} matching items`
        : `list must hold at least ${plural(p.minContains, 'matching item', 'matching items')}`;
    case 'propertyNames':
      return `property name ${show(p.propertyName)} is not allowed`;
    case 'if':
      return `value does not match the "${String(p.failingKeyword)}" branch its "if" condition selects`;
    case 'not':
      return 'value matches a schema it must not match';
    case 'anyOf':
      return 'value matches none of the allowed alternatives';
    case 'oneOf':
      return Array.isArray(p.passingSchemas)
        ? `value matches alternatives ${p.passingSchemas.join(' and ')}; exactly one is allowed`
        : 'value matches none of the alternatives; exactly one is required';
    case 'false schema':
      return 'no value is allowed here';
    default:
      return `value fails the "${e.keyword}" keyword`;
  }
}

// One validator per analysis; keyed by the schema document so a changed setting recompiles.
let prepared: { schema: unknown; validate: RecordValidator } | null = null;

function validatorFor(config: CheckConfig): RecordValidator | null {
  if (config.schema === null) return null;
  if (prepared === null || prepared.schema !== config.schema.schema) {
    prepared = { schema: config.schema.schema, validate: compileSchema(config.schema.schema, config.schema.source) };
  }
  return prepared.validate;
}

export const schemaCheck: Check = {
  name: 'schema',
  rules: SCHEMA_RULES,
  // The map is settled per file (its globs need the file's path), then the schema file is loaded.
  settings: [{ key: 'schemas', type: 'map', summary: 'file glob → JSON Schema file every record must match', editorReadsItself: true }],
  prepare(config: CheckConfig): void {
    validatorFor(config);
  },
  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const validate = validatorFor(config);
    if (validate === null) return;
    for (const issue of validate(rec.value)) out.issues.push(issue);
  },
};
