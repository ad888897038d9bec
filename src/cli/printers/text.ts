// `--format text`: one line per finding (path:line:column for text formats, path row N for
// columnar ones), then a summary per file — readable in a CI log.

import type { Printer } from '../report.js';

export const textPrinter: Printer = {
  print(report, extras, out) {
    report.files.forEach((file, i) => {
      const x = extras[i];
      for (const f of file.findings) {
        const place =
          f.line !== null ? `${file.path}:${f.line}:${f.column ?? 1}` : f.record !== null ? `${file.path} row ${f.record}` : file.path;
        const at = f.pointer ? ` at ${f.pointer}` : '';
        out.write(`${place}: ${f.severity} ${f.rule}: ${f.message}${at}\n`);
      }
      const t = file.tokens;
      const sev = x.bySeverity;
      out.write(
        `${file.path}: ${file.format}, ${file.records} records` +
          (file.layout ? ` (layout ${file.layout}, ${Math.round(file.layoutShare * 1000) / 10}% of records)` : '') +
          (x.blankLines ? `, ${x.blankLines} blank lines` : '') +
          (x.invalidLines ? `, ${x.invalidLines} unreadable entries` : '') +
          `; ${t.total} content tokens (${t.encoding}; prompt ${t.prompt}, response ${t.response}; per record p50 ${t.p50}, p90 ${t.p90}, p99 ${t.p99}, max ${t.max});` +
          ` ${t.overContext} over ${t.contextLength}` +
          `; ${sev.error} errors, ${sev.warning} warnings, ${sev.info} notes\n`,
      );
      if (x.byRule.size) {
        const rules = [...x.byRule.entries()].sort((a, b) => b[1] - a[1]).map(([r, n]) => `${r} ×${n}`);
        out.write(`  by rule: ${rules.join(', ')}\n`);
      }
    });
  },
};
