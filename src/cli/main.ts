// `shardwise check FILE...`: the same engine as the editor, for CI. Exit 0 = no error findings,
// 1 = at least one error finding, 2 = bad usage or a file that cannot be opened.

import { LAYOUT_IDS } from '../engine/layouts/index.js';
import type { LayoutFields } from '../engine/layouts/layout.js';
import { readFileSync, statSync, accessSync, constants } from 'node:fs';
import { ENCODINGS, withDefaults, type CheckConfig, type EncodingName } from '../engine/config.js';
import { sniffFormat, supportedEndings } from '../engine/sources/index.js';
import { ShardTally } from '../engine/stats/tally.js';
import { analyzeInThread } from '../node/inThread.js';
import { analyzeFile, defaultWorkerCount } from '../node/pool.js';
import { jsonPrinter } from './printers/json.js';
import { textPrinter } from './printers/text.js';
import type { FileExtras, FileReport, Printer, Report } from './report.js';

const PRINTERS: Record<string, Printer> = { text: textPrinter, json: jsonPrinter };

export const HELP = `shardwise — check training-data shards before they reach a GPU

Usage:
  shardwise check FILE... [options]

Options:
  --schema FILE          validate every record against this JSON Schema (draft 2020-12 or draft-07)
  --encoding NAME        token encoding: ${ENCODINGS.join(', ')} (default cl100k_base)
  --context N            context length in tokens; longer records are findings (default 8192)
  --format text|json     output format (default text)
  --text-field NAME      field holding a plain record's text (repeatable; default: text, content, document, body, passage)
  --layout ID            how records are read: auto (decided from the shard's first records) or one of
                         ${LAYOUT_IDS.join(', ')}
  --turns-field NAME     a key holding a list of turns, tried before messages/conversations/conversation/dialog (repeatable)
  --role-field NAME      a turn key holding the role, tried before role/from (repeatable)
  --content-field NAME   a turn key holding the content, tried before content/value/text (repeatable)
  --roles LIST           allowed chat roles, comma-separated (default system,user,assistant,tool)
  --allow-repeated-roles do not report the same role twice in a row
  --require-conversation auto|always|never
                         report records without a conversation (default auto: when the shard's first records are chats)
  --max-line-bytes N     lines longer than this are findings and are not parsed (default 67108864)
  --workers N            worker threads (default ${defaultWorkerCount()}; 0 = none)
  -h, --help             show this help

Files: JSON Lines, JSON arrays (both also gzip or zstd), Parquet, Arrow IPC files and streams,
       known by their bytes whatever their names; usual endings: ${supportedEndings().join(' ')}
Exit status: 0 no error findings, 1 error findings, 2 bad usage or a file that cannot be opened.
`;

class UsageError extends Error {}

interface Args {
  files: string[];
  config: CheckConfig;
  format: string;
  workers: number;
}

export function parseArgs(argv: string[]): Args | 'help' {
  if (argv.includes('-h') || argv.includes('--help')) return 'help';
  if (argv.length === 0) throw new UsageError('no command given');
  const [command, ...rest] = argv;
  if (command !== 'check') throw new UsageError(`unknown command "${command}" (try: shardwise check FILE...)`);
  const files: string[] = [];
  const partial: Partial<CheckConfig> = {};
  const textFields: string[] = [];
  let layoutId = 'auto';
  const layoutFields: LayoutFields = {};
  let format = 'text';
  let workers = defaultWorkerCount();
  let schemaPath: string | null = null;
  let roles: string[] | null = null;
  let allowRepeated = false;
  let requireConversation: boolean | 'auto' = 'auto';
  for (let i = 0; i < rest.length; i++) {
    const a = rest[i];
    const value = (): string => {
      const eq = a.indexOf('=');
      if (a.startsWith('--') && eq > 0) return a.slice(eq + 1);
      const v = rest[++i];
      if (v === undefined) throw new UsageError(`${a} needs a value`);
      return v;
    };
    const name = a.startsWith('--') && a.includes('=') ? a.slice(0, a.indexOf('=')) : a;
    switch (name) {
      case '--schema':
        schemaPath = value();
        break;
      case '--encoding': {
        const v = value();
        if (!ENCODINGS.includes(v as EncodingName)) throw new UsageError(`unknown encoding "${v}" (one of ${ENCODINGS.join(', ')})`);
        partial.encoding = v as EncodingName;
        break;
      }
      case '--context':
        partial.contextLength = positiveInt(name, value());
        break;
      case '--format': {
        const v = value();
        if (!PRINTERS[v]) throw new UsageError(`unknown format "${v}" (one of ${Object.keys(PRINTERS).join(', ')})`);
        format = v;
        break;
      }
      case '--text-field':
        textFields.push(value());
        break;
      case '--layout': {
        const v = value();
        if (v !== 'auto' && !LAYOUT_IDS.includes(v)) throw new UsageError(`unknown layout "${v}" (auto or one of ${LAYOUT_IDS.join(', ')})`);
        layoutId = v;
        break;
      }
      case '--turns-field':
        (layoutFields.turns ??= []).push(value());
        break;
      case '--role-field':
        (layoutFields.role ??= []).push(value());
        break;
      case '--content-field':
        (layoutFields.content ??= []).push(value());
        break;
      case '--roles':
        roles = value().split(',').map((s) => s.trim()).filter(Boolean);
        break;
      case '--allow-repeated-roles':
        allowRepeated = true;
        break;
      case '--require-conversation': {
        const v = value();
        if (!['auto', 'always', 'never'].includes(v)) throw new UsageError(`--require-conversation takes auto, always or never, not "${v}"`);
        requireConversation = v === 'always' ? true : v === 'never' ? false : 'auto';
        break;
      }
      case '--max-line-bytes':
        partial.maxLineBytes = positiveInt(name, value());
        break;
      case '--workers':
        workers = nonNegativeInt(name, value());
        break;
      default:
        if (a.startsWith('-') && a !== '-') throw new UsageError(`unknown option ${a}`);
        files.push(a);
    }
  }
  if (files.length === 0) throw new UsageError('no file given (try: shardwise check FILE...)');
  if (textFields.length) partial.textFields = textFields;
  partial.layout = { id: layoutId, fields: layoutFields };
  const config = withDefaults(partial);
  if (roles) config.chat.roles = roles;
  config.chat.allowRepeatedRoles = allowRepeated;
  config.chat.requireConversation = requireConversation;
  if (schemaPath) config.schema = loadSchema(schemaPath);
  return { files, config, format, workers };
}

function positiveInt(flag: string, v: string): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n) || n <= 0) throw new UsageError(`${flag} takes a whole number above 0, not "${v}"`);
  return n;
}
function nonNegativeInt(flag: string, v: string): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n) || n < 0) throw new UsageError(`${flag} takes a whole number, not "${v}"`);
  return n;
}

class FileError extends Error {}

function loadSchema(path: string): CheckConfig['schema'] {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new FileError(`${path}: cannot read the schema (${(err as NodeJS.ErrnoException).code ?? (err as Error).message})`);
  }
  try {
    return { source: path, schema: JSON.parse(text) };
  } catch (err) {
    throw new FileError(`${path}: the schema is not valid JSON (${(err as Error).message})`);
  }
}

/** Fails early, with a clear message, on a file that cannot be opened at all. */
function checkReadable(path: string): void {
  let st;
  try {
    st = statSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new FileError(`${path}: ${code === 'ENOENT' ? 'no such file' : `cannot open (${code})`}`);
  }
  if (st.isDirectory()) throw new FileError(`${path}: is a folder, not a shard`);
  try {
    accessSync(path, constants.R_OK);
  } catch {
    throw new FileError(`${path}: permission denied`);
  }
  try {
    sniffFormat(path);
  } catch (e) {
    throw new FileError((e as Error).message);
  }
}

function round4(x: number): number {
  return Math.round(x * 10000) / 10000;
}

export async function run(argv: string[], out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  let args: Args | 'help';
  try {
    args = parseArgs(argv);
    if (args === 'help') {
      out.write(HELP);
      return 0;
    }
    for (const f of args.files) checkReadable(f);
  } catch (e) {
    if (e instanceof UsageError) {
      err.write(`shardwise: ${e.message}\n\n${HELP}`);
      return 2;
    }
    if (e instanceof FileError) {
      err.write(`shardwise: ${e.message}\n`);
      return 2;
    }
    throw e;
  }
  const { files, config, format, workers } = args;
  const report: Report = { files: [] };
  const extras: FileExtras[] = [];
  let errors = 0;
  for (const path of files) {
    const tally = new ShardTally(Number.MAX_SAFE_INTEGER);
    let formatName = sniffFormat(path).format;
    try {
      const analyze = workers === 0 ? analyzeInThread : analyzeFile;
      await analyze(path, {
        config,
        open: { maxLineBytes: config.maxLineBytes },
        workers,
        onInfo: (info) => {
          formatName = info.format;
        },
        onFileFindings: (fs) => fs.forEach((f) => tally.addFinding(f)),
        onOutcomes: (os) => os.forEach((o) => tally.add(o)),
      });
    } catch (e) {
      const msg = (e as Error).message;
      // A schema that does not compile or a file that vanished mid-run is a usage/setup problem.
      err.write(`shardwise: ${path}: ${msg}\n`);
      return 2;
    }
    const file: FileReport = {
      path,
      format: formatName,
      records: tally.records,
      layout: tally.layout()?.id ?? null,
      layoutShare: round4(tally.layout()?.share ?? 0),
      tokens: tally.tokenSummary(config.encoding, config.contextLength),
      findings: tally.sortedFindings().map((f) => ({
        rule: f.rule,
        family: f.family,
        severity: f.severity,
        message: f.message,
        record: f.record,
        line: f.line,
        column: f.column,
        pointer: f.pointer,
      })),
    };
    errors += tally.bySeverity.error;
    report.files.push(file);
    extras.push({
      entries: tally.entries,
      blankLines: tally.blankLines,
      invalidLines: tally.invalidLines,
      totalFindings: tally.totalFindings,
      bySeverity: tally.bySeverity,
      byRule: tally.byRule,
    });
  }
  PRINTERS[format].print(report, extras, out);
  return errors > 0 ? 1 : 0;
}

