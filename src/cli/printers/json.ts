// `--format json`: exactly one JSON document on standard output.

import type { Printer } from '../report.js';

export const jsonPrinter: Printer = {
  print(report, _extras, out) {
    out.write(`${JSON.stringify(report)}\n`);
  },
};
