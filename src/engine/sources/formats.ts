// The one list of formats: a format is one file in formats/ and one line here (plus its endings in
// package.json's editor selectors; test/unit/engine/sources/sniff.test.ts checks they agree). The order is the
// order the sniffer asks their signs in.

import type { FormatEntry } from './format.js';
import { arrowFileFormat } from './formats/arrowFile.js';
import { arrowStreamFormat } from './formats/arrowStream.js';
import { jsonArrayFormat } from './formats/jsonArray.js';
import { jsonlFormat } from './formats/jsonl.js';
import { parquetFormat } from './formats/parquet.js';

export const FORMATS: readonly FormatEntry[] = [jsonlFormat, jsonArrayFormat, parquetFormat, arrowFileFormat, arrowStreamFormat];
