// The project file, `shardwise.json`: the settings a data repository keeps beside its shards, read
// the same way by the editor and by the CLI so that both give the same verdicts. One declaration
// per setting (its key, type, bounds and summary) serves the file, the CLI options and the
// editor's settings. Pure: reading files and matching globs against paths is the caller's I/O.

import { ALL_CHECKS, CHECK_NAMES } from './checks/index.js';
import { withDefaults, type CheckConfig } from './config.js';
import { globToRegExp } from './globs.js';
import type { LayoutFields } from './layouts/layout.js';
import { RULE_LEVELS, type RuleLevel } from './policy.js';
import type { SettingSpec } from './settings.js';

export type { SettingSpec, SettingType } from './settings.js';

export const PROJECT_FILE = 'shardwise.json';

const MIB = 1024 * 1024;

export const FAIL_LEVELS = ['error', 'warning', 'never'] as const;
export type FailLevel = (typeof FAIL_LEVELS)[number];

/** The settings of the core (reading, rule levels, which checks run, the CI gate); each check declares its own. */
const CORE_SETTINGS: readonly SettingSpec[] = [
  {
    key: 'lines.maxMiB',
    type: 'integer',
    min: 1,
    max: 2047,
    summary: 'lines longer than this many MiB are findings and are not parsed',
    apply: (c, v) => (c.maxLineBytes = (v as number) * MIB),
    cli: [{ flag: '--max-line-mib', value: 'N', verbs: 'reading', help: 'lines longer than N MiB are findings and are not parsed (default 64)' }],
  },
  {
    key: 'reading.memoryMiB',
    type: 'integer',
    min: 16,
    max: 3072,
    summary: 'memory cap per reader in MiB: a Parquet page or row group, or an Arrow batch, declaring more is a read-limit finding, not decoded',
    apply: (c, v) => (c.maxReaderBytes = (v as number) * MIB),
    cli: [
      {
        flag: '--memory-mib',
        value: 'N',
        verbs: 'reading',
        help: 'memory cap per reader: a Parquet page or row group, or an Arrow batch, declaring more than N MiB is a read-limit finding, not decoded (default 1024)',
      },
    ],
  },
  {
    key: 'rules',
    type: 'map',
    values: () => RULE_LEVELS,
    summary: 'rule id → error, warning, info or off',
    apply: (c, v) => (c.rules = { ...(c.rules ?? {}), ...(v as Record<string, RuleLevel>) }),
    cli: [{ flag: '--rule', value: 'ID=LEVEL', repeat: true, help: `set a rule's severity: ${RULE_LEVELS.join(', ')} (repeatable; \`shardwise rules\` lists the ids)`, convert: addRule }],
  },
  {
    key: 'checks',
    type: 'strings',
    values: () => CHECK_NAMES,
    summary: `record checks that run (default all: ${CHECK_NAMES.join(', ')}); reading the records always runs`,
    apply: (c, v) => (c.checks = [...(v as string[])]),
    cli: [
      {
        flag: '--checks',
        value: 'LIST',
        help: `record checks that run, comma-separated: ${CHECK_NAMES.join(', ')} (default all; without tokens nothing is counted); reading the records always runs`,
      },
    ],
  },
  {
    key: 'check.failOn',
    type: 'enum',
    values: () => FAIL_LEVELS,
    summary: 'the severity that fails a CI run (error, warning or never)',
    cli: [{ flag: '--fail-on', value: FAIL_LEVELS.join('|'), verbs: 'gate', help: 'exit 1 when a finding at or above this severity is found (default error)' }],
  },
  {
    key: 'check.maxFindings',
    type: 'integer',
    min: 1,
    max: 100_000_000,
    summary: 'most findings listed per file (all are counted)',
    cli: [{ flag: '--max-findings', value: 'N', verbs: 'gate', help: 'list at most N findings per file; all are still counted (default 10000)' }],
  },
];

/** `--rule ID=LEVEL`, added to the rules given before it. */
function addRule(v: string, prev: unknown): unknown {
  const eq = v.indexOf('=');
  if (eq <= 0) throw new Error(`takes ID=LEVEL (e.g. chat-role-repeated=off), not "${v}"`);
  return { ...((prev as Record<string, string>) ?? {}), [v.slice(0, eq)]: v.slice(eq + 1) };
}

/** Every setting a project file may hold: the checks' own, in check order, then the core's. */
export const SETTINGS: readonly SettingSpec[] = [...ALL_CHECKS.flatMap((c) => c.settings ?? []), ...CORE_SETTINGS];

const BY_KEY = new Map(SETTINGS.map((s) => [s.key, s]));

/** Settings by key, as read from a project file, VS Code or the command line (values checked). */
export type SettingValues = Partial<Record<string, unknown>>;

/** A project file that cannot be used: names the file and the key. */
export class ProjectFileError extends Error {
  constructor(
    readonly file: string,
    message: string,
  ) {
    super(`${file}: ${message}`);
    this.name = 'ProjectFileError';
  }
}

export interface ProjectFile {
  /** Where the file is. */
  path: string;
  /** Its folder: globs and relative paths in it are relative to this folder. */
  dir: string;
  values: SettingValues;
}

/**
 * Parses and checks a project file's text. Keys may nest (`{"tokens": {"contextLength": 4096}}`) or
 * be dotted (`{"tokens.contextLength": 4096}`); `$schema` and keys starting with `//` are ignored.
 * `knownRules`, when given, makes an unknown rule id an error (a typo would silently do nothing).
 */
export function parseProjectFile(path: string, dir: string, text: string, knownRules?: ReadonlySet<string>): ProjectFile {
  let doc: unknown;
  try {
    doc = JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (e) {
    throw new ProjectFileError(path, `not valid JSON (${(e as Error).message})`);
  }
  if (doc === null || typeof doc !== 'object' || Array.isArray(doc)) throw new ProjectFileError(path, 'must hold one JSON object');
  const values: SettingValues = {};
  const walk = (obj: Record<string, unknown>, prefix: string) => {
    for (const [k, v] of Object.entries(obj)) {
      if (k === '$schema' || k.startsWith('//')) continue;
      const key = prefix ? `${prefix}.${k}` : k;
      const spec = BY_KEY.get(key);
      if (spec) {
        values[key] = checkValue(spec, v, (m) => new ProjectFileError(path, `"${key}" ${m}`));
        continue;
      }
      if (v !== null && typeof v === 'object' && !Array.isArray(v) && SETTINGS.some((s) => s.key.startsWith(`${key}.`))) {
        walk(v as Record<string, unknown>, key);
        continue;
      }
      throw new ProjectFileError(path, `unknown setting "${key}" (known: ${SETTINGS.map((s) => s.key).join(', ')})`);
    }
  };
  walk(doc as Record<string, unknown>, '');
  if (knownRules && values.rules) {
    for (const id of Object.keys(values.rules as Record<string, string>)) {
      if (!knownRules.has(id)) throw new ProjectFileError(path, `"rules" names an unknown rule "${id}"${nearest(id, knownRules)}`);
    }
  }
  return { path, dir, values };
}

function nearest(id: string, known: ReadonlySet<string>): string {
  let best = '';
  let bestScore = Infinity;
  for (const k of known) {
    const d = editDistance(id, k);
    if (d < bestScore) [best, bestScore] = [k, d];
  }
  return bestScore <= Math.max(2, id.length / 3) ? ` (did you mean "${best}"? \`shardwise rules\` lists them)` : ' (`shardwise rules` lists them)';
}

function editDistance(a: string, b: string): number {
  const row = Array.from({ length: b.length + 1 }, (_, i) => i);
  for (let i = 1; i <= a.length; i++) {
    let prev = row[0];
    row[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const cur = row[j];
      row[j] = Math.min(row[j] + 1, row[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = cur;
    }
  }
  return row[b.length];
}

/** Checks one value against its declaration; `fail` makes the error with the caller's wording. */
export function checkValue(spec: SettingSpec, v: unknown, fail: (message: string) => Error): unknown {
  switch (spec.type) {
    case 'integer':
      if (typeof v !== 'number' || !Number.isSafeInteger(v)) throw fail(`must be a whole number, not ${JSON.stringify(v)}`);
      if ((spec.min !== undefined && v < spec.min) || (spec.max !== undefined && v > spec.max)) throw fail(`must be between ${spec.min} and ${spec.max}, not ${v}`);
      return v;
    case 'string':
      if (typeof v !== 'string' || v.trim() === '') throw fail(`must be a non-empty string, not ${JSON.stringify(v)}`);
      return v;
    case 'boolean':
      if (typeof v !== 'boolean') throw fail(`must be true or false, not ${JSON.stringify(v)}`);
      return v;
    case 'enum': {
      const ok = spec.values!();
      if (typeof v !== 'string' || !ok.includes(v)) throw fail(`must be one of ${ok.join(', ')}, not ${JSON.stringify(v)}`);
      return v;
    }
    case 'strings':
      if (!Array.isArray(v) || !v.every((x) => typeof x === 'string')) throw fail('must be a list of strings');
      if (spec.values) {
        const ok = spec.values();
        const bad = v.find((x) => !ok.includes(x));
        if (bad !== undefined) throw fail(`has "${bad}", which is none of ${ok.join(', ')}`);
      }
      return v;
    case 'map': {
      if (v === null || typeof v !== 'object' || Array.isArray(v)) throw fail('must be an object');
      const ok = spec.values?.();
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
        if (typeof x !== 'string') throw fail(`entry "${k}" must be a string`);
        if (ok && !ok.includes(x)) throw fail(`entry "${k}" must be one of ${ok.join(', ')}, not ${JSON.stringify(x)}`);
      }
      return v;
    }
    case 'fields': {
      if (v === null || typeof v !== 'object' || Array.isArray(v)) throw fail('must be an object with turns, role and content lists');
      const out: LayoutFields = {};
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
        if (k !== 'turns' && k !== 'role' && k !== 'content' && k !== 'text') throw fail(`has an unknown key "${k}" (turns, role, content)`);
        const list = typeof x === 'string' ? [x] : x;
        if (!Array.isArray(list) || !list.every((s) => typeof s === 'string')) throw fail(`"${k}" must be a list of strings`);
        out[k] = list as string[];
      }
      return out;
    }
  }
}

/** The folders searched for a project file, nearest first, for a data file in `startDir`. */
export function searchDirs(startDir: string, stopAt: (dir: string) => boolean, parent: (dir: string) => string): string[] {
  const out: string[] = [];
  let dir = startDir;
  for (;;) {
    out.push(dir);
    if (stopAt(dir)) break;
    const up = parent(dir);
    if (up === dir) break;
    dir = up;
  }
  return out;
}

/** The first entry of a glob map whose glob matches the file (relative to the map's folder) or its name. */
export function matchGlobMap(map: Record<string, string> | undefined, relPath: string, baseName: string): [string, string] | null {
  if (!map) return null;
  for (const [glob, v] of Object.entries(map)) {
    const re = globToRegExp(glob);
    if (re.test(relPath) || re.test(baseName)) return [glob, v];
  }
  return null;
}

/** What settles one file's checks, before the schema is loaded: the config and where its schema is. */
export interface FileSettings {
  config: CheckConfig;
  /** The schema file to load (as written: relative to `schemaBase`), with the glob that chose it. */
  schema: { path: string; base: string; glob: string | null; from: string } | null;
  failOn: FailLevel;
  maxFindings: number | null;
}

/**
 * One file's settings from layers, lowest first (a project file, then the command line). `relPath`
 * is the data file relative to each layer's folder, computed by `rel`.
 */
export function settleFileSettings(layers: { values: SettingValues; dir: string | null; from: string }[], rel: (dir: string | null) => string, baseName: string): FileSettings {
  const merged: SettingValues = {};
  let schema: FileSettings['schema'] = null;
  let layoutFromGlob: string | null = null;
  let rules: Record<string, RuleLevel> = {};
  for (const layer of layers) {
    for (const [k, v] of Object.entries(layer.values)) {
      if (k === 'schemas' || k === 'layout.byGlob' || k === 'rules') continue;
      merged[k] = v;
    }
    const schemas = layer.values.schemas as Record<string, string> | undefined;
    const hit = matchGlobMap(schemas, rel(layer.dir), baseName);
    if (hit) schema = { path: hit[1], base: layer.dir ?? '', glob: hit[0], from: layer.from };
    const byGlob = matchGlobMap(layer.values['layout.byGlob'] as Record<string, string> | undefined, rel(layer.dir), baseName);
    if (byGlob) layoutFromGlob = byGlob[1];
    if (layer.values['layout.default'] !== undefined) layoutFromGlob = null;
    if (layer.values.rules) rules = { ...rules, ...(layer.values.rules as Record<string, RuleLevel>) };
    // A schema named for every file on the command line.
    if (typeof layer.values['schema.file'] === 'string') schema = { path: layer.values['schema.file'] as string, base: layer.dir ?? '', glob: null, from: layer.from };
  }
  const config = configFromValues(merged);
  if (layoutFromGlob) config.layout.id = layoutFromGlob;
  if (Object.keys(rules).length) config.rules = rules;
  return {
    config,
    schema,
    failOn: (merged['check.failOn'] as FailLevel | undefined) ?? 'error',
    maxFindings: (merged['check.maxFindings'] as number | undefined) ?? null,
  };
}

/** The engine's configuration from checked setting values; what is not set keeps its default. */
export function configFromValues(v: SettingValues): CheckConfig {
  return overlayValues(withDefaults(), v);
}

/** Sets on `config` every setting `v` holds (the glob maps excepted: they need the file's path). */
export function overlayValues(config: CheckConfig, v: SettingValues): CheckConfig {
  for (const spec of SETTINGS) {
    const value = v[spec.key];
    if (value !== undefined) spec.apply?.(config, value);
  }
  // The command line's exact byte limit (--max-line-bytes), for tests and special cases.
  if (v['lines.maxBytes'] !== undefined) config.maxLineBytes = v['lines.maxBytes'] as number;
  return config;
}

export function settingSpec(key: string): SettingSpec | undefined {
  return BY_KEY.get(key);
}
