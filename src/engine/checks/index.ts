// The checks every analysis runs, in order. Adding a rule family is adding a file and a line here.

import type { Check } from './check.js';
import { chatCheck } from './chat.js';
import { layoutCheck } from './layout.js';
import { pairCheck } from './pairs.js';
import { schemaCheck } from './schema.js';
import { tokensCheck } from './tokens.js';

export const ALL_CHECKS: readonly Check[] = [layoutCheck, chatCheck, pairCheck, schemaCheck, tokensCheck];
