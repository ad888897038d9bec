// `--format sarif`: SARIF 2.1.0 (OASIS Static Analysis Results Interchange Format), one run, for
// code-scanning tools. Our rules go in tool.driver.rules; each finding is a result with a physical
// location (the file relative to the working directory; line and column for text formats) and,
// for columnar files, a logical location naming the row.

import { isAbsolute, relative, sep } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { RuleInfo, Severity } from '../../engine/findings.js';
import type { Printer } from '../report.js';

const LEVEL: Record<Severity, 'error' | 'warning' | 'note'> = { error: 'error', warning: 'warning', info: 'note' };

/** A path as a relative URI reference (RFC 3986) from the working directory, with `/` separators. */
export function artifactUri(path: string, cwd: string): { uri: string; uriBaseId?: string } {
  const rel = relative(cwd, path);
  if (!rel.startsWith('..') && !isAbsolute(rel)) return { uri: rel.split(sep).map(encodeURIComponent).join('/'), uriBaseId: 'SRCROOT' };
  return { uri: pathToFileURL(path).href };
}

export function sarifPrinter(rules: readonly RuleInfo[], version: string, cwd = process.cwd()): Printer {
  return {
    print(report, _extras, out) {
      const index = new Map(rules.map((r, i) => [r.id, i]));
      const results = report.files.flatMap((file) =>
        file.findings.map((f) => {
          const physical: Record<string, unknown> = { artifactLocation: artifactUri(file.path, cwd) };
          if (f.line !== null) physical.region = { startLine: f.line, startColumn: f.column ?? 1 };
          const location: Record<string, unknown> = { physicalLocation: physical };
          if (f.row !== undefined) {
            location.logicalLocations = [{ name: `row ${f.row}`, fullyQualifiedName: `${file.path}#row ${f.row}${f.pointer ? ` ${f.pointer}` : ''}`, kind: 'element' }];
          }
          const result: Record<string, unknown> = {
            ruleId: f.rule,
            level: LEVEL[f.severity],
            message: { text: f.pointer ? `${f.message} (at ${f.pointer})` : f.message },
            locations: [location],
          };
          const ri = index.get(f.rule);
          if (ri !== undefined) result.ruleIndex = ri;
          if (f.recordKey) result.partialFingerprints = { 'recordKey/v1': `${f.rule}|${f.recordKey}` };
          if (f.baseline) result.baselineState = 'unchanged';
          return result;
        }),
      );
      const doc = {
        $schema: 'https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json',
        version: '2.1.0',
        runs: [
          {
            tool: {
              driver: {
                name: 'shardwise',
                version,
                informationUri: 'https://example.invalid/shardwise',
                rules: rules.map((r) => ({
                  id: r.id,
                  shortDescription: { text: r.summary },
                  fullDescription: { text: r.summary },
                  help: { text: `${r.summary} (family ${r.family}; default severity ${r.severity})` },
                  defaultConfiguration: { level: LEVEL[r.severity] },
                  properties: { family: r.family },
                })),
              },
            },
            originalUriBaseIds: { SRCROOT: { uri: pathToFileURL(cwd + sep).href } },
            artifacts: report.files.map((f) => ({ location: artifactUri(f.path, cwd), ...(f.split ? { properties: { split: f.split } } : {}) })),
            results,
            columnKind: 'utf16CodeUnits',
          },
        ],
      };
      out.write(`${JSON.stringify(doc)}\n`);
    },
  };
}
