// The tokenizer a shard is counted with, from the settings: the first `tokens.tokenizerByGlob`
// entry whose glob matches the file, else `tokens.tokenizer`, else the built-in `tokens.encoding`.

import { homedir } from 'node:os';
import type * as vscode from 'vscode';
import { resolveTokenizerValue } from '../engine/tokens/kinds.js';

export interface TokenizerSetting {
  /** What to put in CheckConfig.tokenizer (undefined: the encoding setting decides). */
  tokenizer?: string;
  /** A clear message when the configured value names no usable tokenizer (the encoding is used instead). */
  problem?: string;
}

/** `matches(glob)` says whether a glob of the settings matches this file (the host's one glob reading). */
export function tokenizerSetting(s: vscode.WorkspaceConfiguration, baseDir: string, fileName: string, matches: (glob: string) => boolean): TokenizerSetting {
  let value = s.get<string>('tokens.tokenizer', '') ?? '';
  let from = 'shardwise.tokens.tokenizer';
  for (const [glob, v] of Object.entries(s.get<Record<string, string>>('tokens.tokenizerByGlob', {}) ?? {})) {
    if (typeof v === 'string' && matches(glob)) {
      value = v;
      from = `shardwise.tokens.tokenizerByGlob ("${glob}")`;
      break;
    }
  }
  if (value.trim() === '') return {};
  try {
    return { tokenizer: resolveTokenizerValue(value, baseDir, homedir()) };
  } catch (err) {
    return { problem: `The tokenizer set for ${fileName} by ${from} cannot be used, so the encoding setting counts instead: ${(err as Error).message}` };
  }
}
