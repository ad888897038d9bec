// `shardwise`: the same engine as the editor, for CI and for data sets of many shards.
// Exit 0 = nothing at the fail level, 1 = findings at or above it, 2 = bad usage or unreadable input.

import { accessSync, constants, createWriteStream, existsSync, readFileSync, statSync } from 'node:fs';
import { basename, relative, resolve, sep } from 'node:path';
import type { Finding } from '../engine/findings.js';
import { reaches } from '../engine/policy.js';
import { ProjectFileError, settleFileSettings, type FailLevel, type SettingValues } from '../engine/project.js';
import { resolveTokenizerValue, tokenizerOf } from '../engine/tokens/index.js';
import { homedir } from 'node:os';
import { allRules } from '../engine/rules.js';
import { sniffFormat, supportedEndings } from '../engine/sources/index.js';
import type { FormatName } from '../engine/sources/source.js';
import { traitsOf } from '../engine/sources/traits.js';
import { ShardProfile, type ProfileState } from '../engine/stats/profile.js';
import { ShardTally } from '../engine/stats/tally.js';
import { analyzeInThread } from '../node/inThread.js';
import { analyzeFile, defaultWorkerCount } from '../node/pool.js';
import { Baseline, writeBaseline } from './baseline.js';
import { InputError, expandInputs, type InputFile } from './inputs.js';
import { InputProblem, parseCommandLine, verbHelp, UsageError, VERBS, type Parsed } from './options.js';
export { InputProblem };
import { PRINTERS, printerNames } from './printers/index.js';
import { ProgressBar } from './progress.js';
import { ProjectFiles } from './projectFiles.js';
import { printRecords } from './records.js';
import type { FileExtras, FileReport, Report, ReportFinding, TotalReport } from './report.js';
import { mergeReports, statsDocument, printStatsText, type StatsFile } from './stats.js';

declare const SHARDWISE_VERSION: string | undefined;
export const VERSION = typeof SHARDWISE_VERSION === 'string' ? SHARDWISE_VERSION : '0.1.0';

export const HELP = `shardwise — check training-data shards before they reach a GPU

Usage:
${Object.values(VERBS)
  .map((v) => `  ${v.usage}\n      ${v.summary}`)
  .join('\n')}

PATH is a file, a folder (walked for every data file, known by its bytes; a folder written by
save_to_disk is read as one data set with its splits) or a glob pattern such as 'data/**/*.jsonl'.
Settings come from the nearest shardwise.json above each data file (up to the repository root),
then from the options. \`shardwise VERB --help\` lists a verb's options.

Files: JSON Lines, JSON arrays (both also gzip or zstd), Parquet, Arrow IPC files and streams,
       known by their bytes whatever their names; usual endings: ${supportedEndings().join(' ')}
Exit status: 0 nothing at the fail level, 1 findings at or above it (--fail-on), 2 bad usage or
unreadable input.
`;


export const DEFAULT_MAX_FINDINGS = 10_000;

export async function run(argv: string[], out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  let parsed: Parsed;
  try {
    const p = parseCommandLine(argv);
    if (p === 'help') {
      out.write(HELP);
      return 0;
    }
    if ('help' in p) {
      out.write(verbHelp(p.help));
      return 0;
    }
    parsed = p;
  } catch (e) {
    if (e instanceof UsageError) {
      err.write(`shardwise: ${e.message}\n\n${HELP}`);
      return 2;
    }
    throw e;
  }
  try {
    switch (parsed.verb) {
      case 'rules':
        return printRules(parsed, out);
      case 'merge':
        return await withOutput(parsed, out, (o) => mergeVerb(parsed, o));
      case 'sample':
      case 'head':
      case 'slice':
        return await withOutput(parsed, out, (o) => printRecords(parsed, o));
      default:
        return await withOutput(parsed, out, (o) => checkVerb(parsed, o, err));
    }
  } catch (e) {
    if (e instanceof UsageError) {
      err.write(`shardwise: ${e.message}\n\n${verbHelp(parsed.verb)}`);
      return 2;
    }
    if (e instanceof InputError || e instanceof InputProblem || e instanceof ProjectFileError) {
      err.write(`shardwise: ${(e as Error).message}\n`);
      return 2;
    }
    throw e;
  }
}

/** `--output FILE`: the report goes to a new or replaced report file, never over a data file. */
async function withOutput(parsed: Parsed, out: NodeJS.WritableStream, body: (o: NodeJS.WritableStream) => Promise<number>): Promise<number> {
  const target = parsed.opts.output as string | undefined;
  if (!target) return body(out);
  if (existsSync(target) && parsed.positional.some((p) => existsSync(p) && resolve(p) === resolve(target))) {
    throw new InputProblem(`${target}: --output names an input file; the data is never written`);
  }
  const stream = createWriteStream(target);
  await new Promise<void>((res, rej) => stream.once('open', () => res()).once('error', (e) => rej(new InputProblem(`${target}: cannot write the report (${(e as NodeJS.ErrnoException).code})`))));
  try {
    return await body(stream);
  } finally {
    await new Promise<void>((res) => stream.end(res));
  }
}

function printRules(parsed: Parsed, out: NodeJS.WritableStream): number {
  const rules = registry();
  const format = (parsed.opts.format as string | undefined) ?? 'text';
  if (format === 'json') out.write(`${JSON.stringify({ rules })}\n`);
  else if (format === 'text') {
    const w = Math.max(...rules.map((r) => r.id.length));
    for (const r of rules) out.write(`${r.id.padEnd(w)}  ${r.family.padEnd(8)} ${r.severity.padEnd(7)} ${r.summary}\n`);
  } else throw new UsageError(`unknown format "${format}" for rules (text or json)`);
  return 0;
}

/** The rule registry (each id declared once: `allRules` refuses a second declaration). */
export function registry() {
  return allRules();
}

function workerCount(parsed: Parsed): number {
  if (parsed.opts['in-thread']) return 0;
  const w = parsed.opts.workers as string | undefined;
  if (w === undefined || w === 'auto' || w === '0') return defaultWorkerCount();
  const n = Number(w);
  if (!Number.isSafeInteger(n) || n < 1 || n > 256) throw new UsageError(`--workers takes auto or a whole number from 1 to 256, not "${w}"`);
  return n;
}

function stallSecondsOf(parsed: Parsed): number | undefined {
  const v = parsed.opts['stall-seconds'] as string | undefined;
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isFinite(n) || n < 0 || n > 86_400) throw new UsageError(`--stall-seconds takes a number of seconds from 0 to 86400, not "${v}"`);
  return n;
}

/** Fails early, with a clear message, on a file that cannot be opened at all. */
function checkReadable(path: string): { format: FormatName; size: number } {
  let st;
  try {
    st = statSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputProblem(`${path}: ${code === 'ENOENT' ? 'no such file' : `cannot open (${code})`}`);
  }
  if (st.isDirectory()) throw new InputProblem(`${path}: is a folder, not a shard`);
  try {
    accessSync(path, constants.R_OK);
  } catch {
    throw new InputProblem(`${path}: permission denied`);
  }
  try {
    return { format: sniffFormat(path).format, size: st.size };
  } catch (e) {
    throw new InputProblem((e as Error).message);
  }
}

interface FileResult {
  report: FileReport;
  extras: FileExtras;
  profile: ShardProfile;
  failOn: FailLevel;
  /** Findings at or above the fail level that are not in the baseline. */
  failing: number;
}


async function checkVerb(parsed: Parsed, out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const stats = parsed.verb === 'stats';
  const format = (parsed.opts.format as string | undefined) ?? 'text';
  const rules = registry();
  if (!(stats ? ['text', 'json'].includes(format) : Object.hasOwn(PRINTERS, format))) {
    throw new UsageError(`unknown format "${format}" for ${parsed.verb} (${stats ? 'text or json' : printerNames()})`);
  }
  if (parsed.positional.length === 0) throw new UsageError(`no file given (try: shardwise ${parsed.verb} PATH...)`);
  const workers = workerCount(parsed);
  const stallSeconds = stallSecondsOf(parsed);
  const inputs = expandInputs(parsed.positional);
  const sized = inputs.map((f) => ({ ...f, ...checkReadable(f.path) }));
  const projects = new ProjectFiles(new Set(rules.map((r) => r.id)), (parsed.opts.config as string) ?? null, parsed.opts['no-config'] === true);
  const baseline = parsed.opts.baseline ? Baseline.read(parsed.opts.baseline as string) : null;
  // Settle every file's settings before any work: a bad project file or schema stops the run at once.
  const cwd = process.cwd();
  const plans = sized.map((f) => {
    const project = projects.forFile(f.path);
    const layers = [
      ...(project ? [{ values: withTokenizer(project.values, project.dir, project.path), dir: project.dir, from: project.path }] : []),
      { values: withTokenizer(parsed.settings, cwd, '--tokenizer'), dir: cwd, from: 'the command line' },
    ];
    const abs = resolve(f.path);
    const s = settleFileSettings(layers, (dir) => relative(dir ?? cwd, abs).split(sep).join('/'), basename(abs));
    if (s.schema) s.config.schema = projects.schema(s.schema.path, s.schema.base, s.schema.glob ? `"${s.schema.glob}" in ${s.schema.from}` : s.schema.from);
    s.config.profile = stats;
    return { input: f, settings: s };
  });
  const tty = (err as NodeJS.WriteStream).isTTY === true && !parsed.opts.quiet;
  const bar = new ProgressBar(err, plans.length, sized.reduce((a, f) => a + f.size, 0), tty);
  const results: FileResult[] = new Array(plans.length);
  const concurrency = workers === 0 ? 1 : Math.max(1, Math.min(workers, plans.length));
  const perFile = workers === 0 ? 0 : Math.max(1, Math.floor(workers / concurrency));
  let next = 0;
  try {
    await Promise.all(
      Array.from({ length: concurrency }, async () => {
        for (;;) {
          const i = next++;
          if (i >= plans.length) return;
          const { input, settings } = plans[i];
          results[i] = await checkOne(input, sized[i].format, sized[i].size, settings, perFile, (b) => bar.update(i, b), stallSeconds);
          if (baseline) {
            const r = results[i];
            r.extras.baselined = baseline.mark(r.report);
            r.failing = countFailing(r, true);
          }
          bar.finish(i, sized[i].size, results[i].report.records);
        }
      }),
    );
  } finally {
    bar.stop();
  }
  if (parsed.opts['write-baseline']) writeBaseline(parsed.opts['write-baseline'] as string, results.map((r) => r.report));
  const total = new ShardProfile(results[0]?.profile.contextLength ?? null);
  total.shards = 0;
  for (const r of results) total.merge(r.profile);
  if (stats) {
    const files: StatsFile[] = results.map((r) => ({ path: r.report.path, format: r.report.format, ...(r.report.split ? { split: r.report.split } : {}), layout: r.report.layout, encoding: r.report.tokens.encoding, state: r.profile.toJSON() }));
    const doc = statsDocument(files);
    if (format === 'json') out.write(`${JSON.stringify(doc)}\n`);
    else printStatsText(doc, out);
    return 0;
  }
  const report: Report = { files: results.map((r) => r.report), total: totalOf(total, results) };
  PRINTERS[format]!({ rules, version: VERSION }).print(report, results.map((r) => r.extras), out);
  return results.some((r) => r.failing > 0) ? 1 : 0;
}

/** A tokenizer named in a layer, made absolute against that layer's folder (a clear message if it names nothing usable). */
function withTokenizer(values: SettingValues, dir: string, from: string): SettingValues {
  const v = values['tokens.tokenizer'];
  if (typeof v !== 'string') return values;
  try {
    return { ...values, 'tokens.tokenizer': resolveTokenizerValue(v, dir, homedir()) };
  } catch (e) {
    throw new InputProblem(`${from}: ${(e as Error).message}`);
  }
}

export function totalOf(total: ShardProfile, results: { report: FileReport }[]): TotalReport {
  const s = total.summary();
  const encodings = [...new Set(results.map((r) => r.report.tokens.encoding))];
  return { files: results.length, records: s.records, tokens: { encoding: encodings.join(', '), ...s.tokens }, findings: s.findings };
}

function countFailing(r: FileResult, withBaseline: boolean): number {
  if (r.failOn === 'never') return 0;
  if (!withBaseline) {
    const sev = r.extras.bySeverity;
    return r.failOn === 'error' ? sev.error : sev.error + sev.warning;
  }
  // Findings past the listed ones cannot be matched against the baseline: they count as new.
  const listedFailing = r.report.findings.filter((f) => !f.baseline && reaches(f.severity, r.failOn)).length;
  const sev = r.extras.bySeverity;
  const all = r.failOn === 'error' ? sev.error : sev.error + sev.warning;
  const listedAll = r.report.findings.filter((f) => reaches(f.severity, r.failOn)).length;
  return listedFailing + (all - listedAll);
}

async function checkOne(
  input: InputFile,
  format: FormatName,
  size: number,
  settings: ReturnType<typeof settleFileSettings>,
  workers: number,
  onBytes: (b: number) => void,
  stallSeconds?: number,
): Promise<FileResult> {
  const { config } = settings;
  const maxFindings = settings.maxFindings ?? DEFAULT_MAX_FINDINGS;
  const tally = new ShardTally(maxFindings);
  const profile = new ShardProfile(config.contextLength);
  profile.bytes = size;
  const keys = new WeakMap<Finding, string>();
  let formatName = format;
  try {
    const analyze = workers === 0 ? analyzeInThread : analyzeFile;
    await analyze(input.path, {
      config,
      open: { maxLineBytes: config.maxLineBytes, stallSeconds, maxReaderBytes: config.maxReaderBytes },
      workers: Math.max(1, workers),
      onInfo: (info) => {
        formatName = info.format;
      },
      onProgress: (p) => onBytes(p.total > 0 ? (p.done / p.total) * size : 0),
      onFileFindings: (fs) =>
        fs.forEach((f) => {
          tally.addFinding(f);
          profile.addFinding(f);
        }),
      onOutcomes: (os) =>
        os.forEach((o) => {
          if (o.key) for (const f of o.findings) keys.set(f, o.key);
          tally.add(o);
          profile.add(o);
        }),
    });
  } catch (e) {
    // A schema that does not compile or a file that vanished mid-run is a setup problem.
    throw new InputProblem(`${input.path}: ${(e as Error).message}`);
  }
  const columnar = !traitsOf(formatName).textual;
  const findings: ReportFinding[] = tally.sortedFindings().map((f) => ({
    rule: f.rule,
    family: f.family,
    severity: f.severity,
    message: f.message,
    record: f.record,
    line: f.line,
    column: f.column,
    pointer: f.pointer,
    recordKey: keys.get(f) ?? null,
    ...(columnar && f.line === null && f.entry !== null ? { row: f.entry + 1 } : {}),
  }));
  const report: FileReport = {
    path: input.path,
    format: formatName,
    ...(input.split ? { split: input.split } : {}),
    records: tally.records,
    layout: tally.layout()?.id ?? null,
    layoutShare: round4(tally.layout()?.share ?? 0),
    tokens: tally.tokenSummary(tokenizerOf(config), config.contextLength),
    findings,
    findingsTotal: tally.totalFindings,
    findingsByRule: Object.fromEntries([...tally.byRule.entries()].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1))),
  };
  const extras: FileExtras = {
    entries: tally.entries,
    blankLines: tally.blankLines,
    invalidLines: tally.invalidLines,
    totalFindings: tally.totalFindings,
    bySeverity: tally.bySeverity,
    byRule: tally.byRule,
    baselined: 0,
  };
  const result: FileResult = { report, extras, profile, failOn: settings.failOn, failing: 0 };
  result.failing = countFailing(result, false);
  return result;
}

function round4(x: number): number {
  return Math.round(x * 10000) / 10000;
}

async function mergeVerb(parsed: Parsed, out: NodeJS.WritableStream): Promise<number> {
  if (parsed.positional.length === 0) throw new UsageError('no report given (try: shardwise merge REPORT.json...)');
  const format = (parsed.opts.format as string | undefined) ?? 'json';
  if (!['text', 'json'].includes(format)) throw new UsageError(`unknown format "${format}" for merge (text or json)`);
  const docs = parsed.positional.map((p) => {
    try {
      return { path: p, doc: JSON.parse(readFileSync(p, 'utf8')) as { files?: StatsFile[] } };
    } catch (e) {
      throw new InputProblem(`${p}: cannot read the report (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
    }
  });
  let doc;
  try {
    doc = mergeReports(docs);
  } catch (e) {
    throw new InputProblem((e as Error).message);
  }
  if (format === 'json') out.write(`${JSON.stringify(doc)}\n`);
  else printStatsText(doc, out);
  return 0;
}

export type { ProfileState };
