import type { LayoutConfig } from './layouts/layout.js';
import type { RulePolicy } from './policy.js';

// Settings the checks read. The host maps VS Code settings onto this; the CLI maps flags onto it.

export type EncodingName = 'cl100k_base' | 'o200k_base';
export const ENCODINGS: readonly EncodingName[] = ['cl100k_base', 'o200k_base'];

export interface ChatConfig {
  /** Allowed roles after mapping (common practice: system, user, assistant, tool). */
  roles: string[];
  /** When false, the same role twice in a row is a finding. */
  allowRepeatedRoles: boolean;
  /**
   * Whether a record without a conversation field is a finding: 'auto' decides per shard (a shard
   * whose first records are mostly conversations is a chat shard).
   */
  requireConversation?: boolean | 'auto';
}

export interface SchemaConfig {
  /** Where the schema came from, for messages. */
  source: string;
  /** The parsed JSON Schema document. */
  schema: unknown;
}

export interface CheckConfig {
  /** Which layout reads the records ('auto' = decided per shard) and the user's field names. */
  layout: LayoutConfig;
  /** The layout settled for this shard from its first records (set by the analysis, not by users). */
  shardLayout?: string | null;
  /** The shard's folder, where relative media paths are looked for (set by the analysis). */
  baseDir?: string | null;
  /** The built-in encoding, used when `tokenizer` is not set. */
  encoding: EncodingName;
  /**
   * The tokenizer: a built-in encoding name or the absolute path of a model folder holding
   * tokenizer.json (see `resolveTokenizerValue` in tokens/). When unset, `encoding` is the tokenizer.
   */
  tokenizer?: string;
  /** Records with more tokens than this overflow the context window. */
  contextLength: number;
  /** Field names looked for, in order, as the text of a plain (non-chat) record. */
  textFields: string[];
  chat: ChatConfig;
  schema: SchemaConfig | null;
  /** A line longer than this many bytes is a finding and is not parsed. */
  maxLineBytes: number;
  /** The memory cap per reader: a page, row group or batch declaring more is refused with a finding. */
  maxReaderBytes: number;
  /** Per-rule severity overrides and rules turned off (a project's policy). */
  rules?: RulePolicy;
  /** Also report each record's content hash and field types (for `shardwise stats`). */
  profile?: boolean;
  /** The record checks that run, by name (unset: all); reading the records (json, encoding, read) always runs. */
  checks?: string[];
}

export const DEFAULT_CONFIG: CheckConfig = {
  layout: { id: 'auto', fields: {} },
  encoding: 'cl100k_base',
  contextLength: 8192,
  textFields: ['text', 'content', 'document', 'body', 'passage'],
  chat: { roles: ['system', 'user', 'assistant', 'tool'], allowRepeatedRoles: false, requireConversation: 'auto' },
  schema: null,
  maxLineBytes: 64 * 1024 * 1024,
  maxReaderBytes: 1024 * 1024 * 1024,
};

export function withDefaults(partial: Partial<CheckConfig> = {}): CheckConfig {
  return {
    ...DEFAULT_CONFIG,
    ...partial,
    chat: { ...DEFAULT_CONFIG.chat, ...(partial.chat ?? {}) },
    layout: { ...DEFAULT_CONFIG.layout, ...(partial.layout ?? {}), fields: { ...(partial.layout?.fields ?? {}) } },
  };
}
