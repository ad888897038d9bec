// The command line's options: one table, read by every verb's parser and its --help. The options
// that set a setting are declared with the setting (its `cli`, beside the check that owns it) and
// write the setting's key, so a project file and a flag mean the same thing.

import { SETTINGS, checkValue, settingSpec, type SettingValues } from '../engine/project.js';
import type { CliFlag } from '../engine/settings.js';
import { printerNames } from './printers/index.js';

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** A file that cannot be opened at all, or a setting that cannot work: exit 2. */
export class InputProblem extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputProblem';
  }
}

export interface Parsed {
  verb: string;
  positional: string[];
  /** Setting values given on the command line, by setting key. */
  settings: SettingValues;
  /** Other options, by option name without dashes. */
  opts: Record<string, string | boolean | string[]>;
}

interface OptionDef {
  flag: string;
  alias?: readonly string[];
  value?: string;
  help: string;
  /** The setting it sets, if any. */
  setting?: string;
  repeat?: boolean;
  verbs: readonly string[];
  /** Turns the text into the setting's value (default: by the setting's type). */
  convert?: (v: string, prev: unknown) => unknown;
}

const CHECKING = ['check', 'stats'] as const;
const RECORDS = ['sample', 'head', 'slice'] as const;
const VERB_SETS: Record<NonNullable<CliFlag['verbs']>, readonly string[]> = { checking: CHECKING, reading: [...CHECKING, ...RECORDS], gate: ['check'] };
const listOf = (v: string) => v.split(',').map((s) => s.trim()).filter(Boolean);

/** The options each setting declares (its `cli`), in the settings' order. */
function settingOptions(): OptionDef[] {
  return SETTINGS.flatMap((spec) =>
    (spec.cli ?? []).map((c): OptionDef => {
      const byType = (v: string, prev: unknown): unknown => {
        if (!c.value) return true;
        if (spec.type === 'integer') return Number(v);
        if (spec.type === 'strings') return c.repeat ? [...((prev as string[]) ?? []), v] : listOf(v);
        return v;
      };
      const convert = c.convert ?? byType;
      return {
        flag: c.flag,
        alias: c.alias,
        value: c.value,
        help: c.help,
        setting: spec.key,
        repeat: c.repeat,
        verbs: VERB_SETS[c.verbs ?? 'checking'],
        convert: (v, prev) => {
          try {
            return convert(v, prev);
          } catch (e) {
            throw new UsageError(`${c.flag} ${(e as Error).message}`);
          }
        },
      };
    }),
  );
}

/** Every option: the command line's own, and those the settings declare. */
export const OPTIONS: readonly OptionDef[] = [
  { flag: '--config', value: 'FILE', help: 'use this project file for every data file instead of looking for shardwise.json', verbs: [...CHECKING] },
  { flag: '--no-config', help: 'ignore every project file', verbs: [...CHECKING] },
  { flag: '--schema', value: 'FILE', help: 'validate every record against this JSON Schema (draft 2020-12 or draft-07), whatever the project file maps', setting: 'schema.file', verbs: [...CHECKING], convert: (v) => v },
  ...settingOptions(),
  { flag: '--max-line-bytes', value: 'N', help: 'the line limit of --max-line-mib to the byte (default 67108864)', setting: 'lines.maxBytes', verbs: [...CHECKING, ...RECORDS], convert: (v) => exactBytes(v) },
  { flag: '--baseline', value: 'FILE', help: 'fail only on findings that are not in this baseline (matched by rule, file and record identity)', verbs: ['check'] },
  { flag: '--write-baseline', value: 'FILE', help: 'write the findings of this run as a baseline file', verbs: ['check'] },
  { flag: '--stall-seconds', value: 'N', help: 'stop reading a file that makes no progress (no record, no byte) for N seconds, with a read-stalled error (default 10; 0 never stops)', verbs: [...CHECKING] },
  { flag: '--workers', value: 'auto|N', help: 'worker threads (default auto: one per core, up to 4)', verbs: [...CHECKING] },
  { flag: '--in-thread', help: 'check in this thread, without worker threads (small files, debugging); a reader that stops making progress ends the process with a message instead of a report', verbs: [...CHECKING] },
  { flag: '--format', value: 'FORMAT', help: `output: text or json (check: ${printerNames()})`, verbs: [...CHECKING, 'merge', 'rules'] },
  { flag: '--output', alias: ['-o'], value: 'FILE', help: 'write the report to FILE instead of standard output (never over the data)', verbs: [...CHECKING, 'merge', ...RECORDS] },
  { flag: '--quiet', alias: ['-q'], help: 'no progress bar on standard error', verbs: [...CHECKING] },
  { flag: '--count', alias: ['-n'], value: 'N', help: 'how many records (sample, head: default 10)', verbs: ['sample', 'head'] },
  { flag: '--seed', value: 'S', help: 'seed of the sample (the same seed gives the same sample; default 0)', verbs: ['sample'] },
  { flag: '--from', value: 'N', help: 'first record of the slice (1 = the first record)', verbs: ['slice'] },
  { flag: '--to', value: 'N', help: 'last record of the slice (inclusive; default the last record)', verbs: ['slice'] },
];

function exactBytes(v: string): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n) || n < 16 || n > 2 ** 31 - 1) throw new UsageError(`--max-line-bytes takes a whole number from 16 to ${2 ** 31 - 1}, not "${v}"`);
  return n;
}

export const VERBS: Record<string, { usage: string; summary: string }> = {
  check: { usage: 'shardwise check PATH... [options]', summary: 'check files, folders or glob patterns; exit 1 on findings at the fail level' },
  stats: { usage: 'shardwise stats PATH... [options]', summary: 'records, tokens with percentiles, findings by rule, field types; --format json carries mergeable state' },
  merge: { usage: 'shardwise merge REPORT... [options]', summary: 'combine `stats --format json` reports of shards into the report of the whole data set' },
  sample: { usage: 'shardwise sample FILE -n N [--seed S]', summary: 'a seeded uniform random sample of records, as JSON Lines' },
  head: { usage: 'shardwise head FILE [-n N]', summary: 'the first records, as JSON Lines' },
  slice: { usage: 'shardwise slice FILE --from N [--to M]', summary: 'records N to M (1 = the first record), as JSON Lines' },
  rules: { usage: 'shardwise rules [--format text|json]', summary: 'every rule: id, family, default severity, summary' },
};

export function parseCommandLine(argv: readonly string[]): Parsed | 'help' | { help: string } {
  if (argv.length === 0) throw new UsageError('no command given');
  if (argv[0] === '-h' || argv[0] === '--help' || argv[0] === 'help') return argv[1] && VERBS[argv[1]] ? { help: argv[1] } : 'help';
  const [verb, ...rest] = argv;
  if (!VERBS[verb]) throw new UsageError(`unknown command "${verb}" (one of ${Object.keys(VERBS).join(', ')})`);
  if (rest.includes('-h') || rest.includes('--help')) return { help: verb };
  const parsed: Parsed = { verb, positional: [], settings: {}, opts: {} };
  for (let i = 0; i < rest.length; i++) {
    const a = rest[i];
    if (!a.startsWith('-') || a === '-') {
      parsed.positional.push(a);
      continue;
    }
    if (a === '--') {
      parsed.positional.push(...rest.slice(i + 1));
      break;
    }
    const eq = a.startsWith('--') ? a.indexOf('=') : -1;
    const name = eq > 0 ? a.slice(0, eq) : a;
    const def = OPTIONS.find((o) => o.flag === name || o.alias?.includes(name));
    if (!def) throw new UsageError(`unknown option ${name}${verb ? ` for ${verb}` : ''}`);
    if (!def.verbs.includes(verb)) throw new UsageError(`${def.flag} does not apply to ${verb}`);
    let value: string | true = true;
    if (def.value) {
      if (eq > 0) value = a.slice(eq + 1);
      else {
        const v = rest[++i];
        if (v === undefined) throw new UsageError(`${def.flag} needs a value (${def.value})`);
        value = v;
      }
    }
    if (def.setting) {
      const prev = parsed.settings[def.setting];
      let v: unknown = def.convert ? def.convert(value as string, prev) : value;
      const spec = settingSpec(def.setting);
      if (spec) v = checkValue(spec, v, (m) => new UsageError(`${def.flag} ${m}`));
      parsed.settings[def.setting] = v;
    } else {
      const key = def.flag.replace(/^--/, '');
      if (def.repeat) parsed.opts[key] = [...((parsed.opts[key] as string[]) ?? []), value as string];
      else parsed.opts[key] = value;
    }
  }
  return parsed;
}

/** `shardwise VERB --help`: the verb's usage and its options. */
export function verbHelp(verb: string): string {
  const v = VERBS[verb];
  const lines = [`${v.usage}\n\n${v.summary}\n\nOptions:`];
  for (const o of OPTIONS.filter((x) => x.verbs.includes(verb))) {
    const names = [o.flag, ...(o.alias ?? [])].join(', ') + (o.value ? ` ${o.value}` : '');
    lines.push(`  ${names.padEnd(30)} ${o.help}${o.setting && !o.setting.includes('.file') ? ` [setting ${o.setting}]` : ''}`);
  }
  lines.push(`  ${'-h, --help'.padEnd(30)} show this help`);
  return `${lines.join('\n')}\n`;
}
