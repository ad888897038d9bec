// The outputs of `shardwise check`, by `--format` name. An output is one printer file in this
// folder and one line here; `--format`'s help and its error message list these names.

import type { RuleInfo } from '../../engine/findings.js';
import type { Printer } from '../report.js';
import { jsonPrinter } from './json.js';
import { sarifPrinter } from './sarif.js';
import { textPrinter } from './text.js';

/** What a printer may need beyond the report: the rule registry and the tool's version. */
export interface PrinterContext {
  rules: readonly RuleInfo[];
  version: string;
}

export const PRINTERS: Readonly<Record<string, (c: PrinterContext) => Printer>> = {
  text: () => textPrinter,
  json: () => jsonPrinter,
  sarif: (c) => sarifPrinter(c.rules, c.version),
};

/** Names joined for a sentence: "text, json or sarif". */
export function printerNames(names: readonly string[] = Object.keys(PRINTERS)): string {
  return names.length < 2 ? names.join('') : `${names.slice(0, -1).join(', ')} or ${names[names.length - 1]}`;
}
