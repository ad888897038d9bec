// The checks every analysis runs, in order. Adding a rule family is adding a file and a line here.

import type { Check } from './check.js';
import { chatCheck } from './chat.js';
import { layoutCheck } from './layout.js';
import { pairCheck } from './pairs.js';
import { schemaCheck } from './schema.js';
import { tokensCheck } from './tokens.js';

export const ALL_CHECKS: readonly Check[] = [layoutCheck, chatCheck, pairCheck, schemaCheck, tokensCheck];

/** The record checks by name, in the order they run: what `--checks` and the project file's `checks` take. */
export const CHECK_NAMES: readonly string[] = ALL_CHECKS.map((c) => c.name);
