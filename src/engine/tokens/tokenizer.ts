// The one tokenizer interface. Each kind is one file listed in kinds.ts: the built-in encodings
// (`counter.ts`) and a model folder holding tokenizer.json (`model.ts`). A tokenizer is named by one
// string that crosses to workers in the CheckConfig: an encoding name, or the absolute path of a
// model folder.

import type { CheckConfig } from '../config.js';
import type { ChatTemplateSpec } from './chatTemplate.js';

export interface Tokenizer {
  /** What names it in settings and reports: the encoding name, or the model folder's path. */
  readonly name: string;
  /** A short name for screens: the encoding name, or the model folder's own name. */
  readonly label: string;
  /** Its kind's name (kinds.ts). */
  readonly kind: string;
  /** Tokens of a piece of content (no special tokens added around it). */
  count(text: string): number;
  /** Token ids of a piece of content, as `count` counts them. */
  encode(text: string): number[];
  /** Tokens of a rendered sequence: every special-token spelling is its control token. */
  countRendered(text: string): number;
  /** Ids of a rendered sequence, as `countRendered` counts them. */
  encodeRendered(text: string): number[];
  /** Spellings of the control tokens (a model's added tokens marked special) and their ids. */
  readonly specialTokens: Readonly<Record<string, number>>;
  /**
   * How `count` reads a special token's spelling inside content: as ordinary text (the built-in
   * encodings' ordinary encoding), or as the control token (a model's tokenizer.json, as its own
   * library reads any text it is given).
   */
  readonly specialsInContent: 'text' | 'control';
  /** The model's chat template, when its folder has one. */
  readonly chatTemplate: ChatTemplateSpec | null;
  /**
   * A sentence on a text that spells this tokenizer's control tokens (or markers a chat template
   * would read as turn boundaries), for the `tokens-special-text` finding; null when it spells none.
   */
  specialTextNote(text: string): string | null;
}

/** A tokenizer that cannot be named or loaded: the message says what is wrong and where. */
export class TokenizerError extends Error {
  override readonly name = 'TokenizerError';
}

/** The tokenizer a configuration names: `tokenizer` when set, else the built-in `encoding`. */
export function tokenizerOf(config: Pick<CheckConfig, 'encoding' | 'tokenizer'>): string {
  return config.tokenizer && config.tokenizer.trim() !== '' ? config.tokenizer : config.encoding;
}
