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
}
