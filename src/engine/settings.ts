// A setting's declaration: its key, type, bounds, summary and how it sets the engine's
// configuration. Each check declares its own settings beside its rules (`Check.settings`); the core
// ones live in project.ts. The project file, the CLI options and the editor's settings all read
// the list `SETTINGS` in project.ts gathers, so a check with a new setting touches no central table.

import type { CheckConfig } from './config.js';

export type SettingType = 'integer' | 'boolean' | 'enum' | 'string' | 'strings' | 'map' | 'fields';

export interface SettingSpec {
  /** The key in the project file (nested or dotted) and, under `shardwise.`, in VS Code settings. */
  key: string;
  type: SettingType;
  /** enum values, or the values a map's entries may take. */
  values?: () => readonly string[];
  min?: number;
  max?: number;
  summary: string;
  /**
   * Sets a checked value on the engine's configuration. Absent for settings read elsewhere: the
   * glob maps (they need the file's path) and the CI gate's own (`check.*`).
   */
  apply?(config: CheckConfig, value: unknown): void;
  /** The editor reads this setting itself (it names files or depends on the file's path), not through `apply`. */
  editorReadsItself?: boolean;
  /** The command line's options that set it (`shardwise VERB --help` lists them). */
  cli?: readonly CliFlag[];
}

/** One command-line option that sets a setting. */
export interface CliFlag {
  flag: string;
  alias?: readonly string[];
  /** The value's placeholder in help; absent for a switch, which sets true. */
  value?: string;
  help: string;
  /** The option may be given more than once. */
  repeat?: boolean;
  /** The verbs that take it: check and stats (the default), those and the record verbs, or check alone. */
  verbs?: 'checking' | 'reading' | 'gate';
  /**
   * The option's text (with the value it built so far) → the setting's value. By default, by the
   * setting's type: a number for an integer, true for a switch, a comma-separated list for strings
   * (appended to when repeatable), the text itself otherwise. Throws Error with a clear message.
   */
  convert?: (text: string, prev: unknown) => unknown;
}
