// `--format text`: findings grouped by file, each as `path:line:column` (terminals and editors make
// it a link) or `path row N` for columnar rows, then one summary table over every file.

import { tokenizerLabel } from '../../engine/tokens/kinds.js';
import { formatPlace } from '../../engine/places.js';
import type { FileReport, Printer, ReportFinding } from '../report.js';

export function findingPlace(path: string, f: ReportFinding): string {
  if (f.line !== null) return `${path}:${formatPlace({ line: f.line, column: f.column ?? 1, entry: null })}`;
  if (f.row !== undefined) return `${path} ${formatPlace({ line: null, entry: f.row - 1 })}`;
  return path;
}

const n = (x: number | null) => (x === null ? '–' : x.toLocaleString('en-US'));

export const textPrinter: Printer = {
  print(report, extras, out) {
    report.files.forEach((file, i) => {
      const x = extras[i];
      if (file.findings.length) out.write(`\n${file.path}${file.split ? ` (split ${file.split})` : ''}\n`);
      for (const f of file.findings) {
        const at = f.pointer ? ` at ${f.pointer}` : '';
        out.write(`  ${findingPlace(file.path, f)}: ${f.severity} ${f.rule}: ${f.message}${at}${f.baseline ? ' (in baseline)' : ''}\n`);
      }
      const listed = file.findings.length;
      if (listed < file.findingsTotal) out.write(`  … ${n(file.findingsTotal - listed)} more findings not listed (--max-findings)\n`);
      out.write(`  ${describe(file, x.blankLines, x.invalidLines)}\n`);
    });
    out.write(`\n${table(report.files, extras)}`);
    const t = report.total;
    const rules = Object.entries(t.findings.byRule).map(([r, c]) => `${r} ×${n(c)}`);
    if (rules.length) out.write(`by rule: ${rules.join(', ')}\n`);
    const baselined = extras.reduce((a, x) => a + x.baselined, 0);
    if (baselined) out.write(`${n(baselined)} findings are in the baseline and do not fail the run\n`);
  },
};

function describe(file: FileReport, blank: number, invalid: number): string {
  const t = file.tokens;
  return (
    `${file.path}: ${file.format}, ${n(file.records)} records` +
    (file.layout ? ` (layout ${file.layout}, ${Math.round(file.layoutShare * 1000) / 10}% of records)` : '') +
    (blank ? `, ${n(blank)} blank lines` : '') +
    (invalid ? `, ${n(invalid)} unreadable lines or rows` : '') +
    `; ${n(t.total)} content tokens (${tokenizerLabel(t.tokenizer ?? t.encoding)}; prompt ${n(t.prompt)}, response ${n(t.response)}; per record p50 ${n(t.p50)}, p90 ${n(t.p90)}, p99 ${n(t.p99)}, max ${n(t.max)});` +
    (t.rendered !== undefined ? ` rendered with the chat template ${n(t.rendered)} (template overhead ${n(t.rendered - t.total)}), trained ${n(t.trainable ?? 0)};` : '') +
    ` ${n(t.overContext)} over ${n(t.contextLength)}`
  );
}

function table(files: FileReport[], extras: { bySeverity: Record<string, number> }[]): string {
  const head = ['file', 'format', 'records', 'tokens', 'max', 'over context', 'errors', 'warnings', 'notes'];
  const rows = files.map((f, i) => [
    f.path + (f.split ? ` [${f.split}]` : ''),
    f.format,
    n(f.records),
    n(f.tokens.total),
    n(f.tokens.max),
    n(f.tokens.overContext),
    n(extras[i].bySeverity.error),
    n(extras[i].bySeverity.warning),
    n(extras[i].bySeverity.info),
  ]);
  const sum = (k: string) => extras.reduce((a, x) => a + x.bySeverity[k], 0);
  rows.push([
    `total (${files.length} ${files.length === 1 ? 'file' : 'files'})`,
    '',
    n(files.reduce((a, f) => a + f.records, 0)),
    n(files.reduce((a, f) => a + f.tokens.total, 0)),
    n(files.reduce((a, f) => Math.max(a, f.tokens.max), 0)),
    n(files.reduce((a, f) => a + f.tokens.overContext, 0)),
    n(sum('error')),
    n(sum('warning')),
    n(sum('info')),
  ]);
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (r: string[]) => r.map((cell, c) => (c < 2 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ').trimEnd() + '\n';
  return line(head) + line(widths.map((w) => '─'.repeat(w))) + rows.slice(0, -1).map(line).join('') + line(widths.map((w) => '─'.repeat(w))) + line(rows[rows.length - 1]);
}
