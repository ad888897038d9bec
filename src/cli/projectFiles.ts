// Finds each data file's project file (`shardwise.json`) from its folder upwards, stopping at a
// repository root (a folder holding `.git`), and loads the JSON Schemas settings name — each once.

import { existsSync, readFileSync } from 'node:fs';
import { dirname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import type { SchemaConfig } from '../engine/config.js';
import { PROJECT_FILE, parseProjectFile, searchDirs, type ProjectFile } from '../engine/project.js';

export class ProjectFiles {
  private byDir = new Map<string, ProjectFile | null>();
  private schemas = new Map<string, SchemaConfig>();

  /** `fixed`: the file `--config` named (used for every data file); `none`: `--no-config`. */
  constructor(
    private readonly knownRules: ReadonlySet<string>,
    private readonly fixed: string | null,
    private readonly none: boolean,
  ) {}

  /** The project file that governs a data file, or null. Throws ProjectFileError on a bad one. */
  forFile(path: string): ProjectFile | null {
    if (this.none) return null;
    if (this.fixed) return this.load(resolve(this.fixed));
    const dirs = searchDirs(
      dirname(resolve(path)),
      (d) => existsSync(join(d, '.git')),
      (d) => dirname(d),
    );
    for (const d of dirs) {
      const cached = this.byDir.get(d);
      if (cached !== undefined) {
        if (cached) return cached;
        continue;
      }
      const candidate = join(d, PROJECT_FILE);
      const found = existsSync(candidate) ? this.load(candidate) : null;
      this.byDir.set(d, found);
      if (found) return found;
    }
    return null;
  }

  private loaded = new Map<string, ProjectFile>();
  private load(file: string): ProjectFile {
    let p = this.loaded.get(file);
    if (!p) {
      p = parseProjectFile(file, dirname(file), readText(file, 'the project file'), this.knownRules);
      this.loaded.set(file, p);
    }
    return p;
  }

  /** Loads a JSON Schema file once; a relative path is relative to `base`. */
  schema(path: string, base: string, origin: string): SchemaConfig {
    const full = isAbsolute(path) ? path : resolve(base || '.', path);
    let s = this.schemas.get(full);
    if (!s) {
      const text = readText(full, `the JSON Schema named by ${origin}`);
      try {
        s = { source: relativeOrAbsolute(full), schema: JSON.parse(text) };
      } catch (err) {
        throw new Error(`${full}: the JSON Schema named by ${origin} is not valid JSON (${(err as Error).message})`);
      }
      this.schemas.set(full, s);
    }
    return s;
  }
}

function readText(path: string, what: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (err) {
    throw new Error(`${path}: cannot read ${what} (${(err as NodeJS.ErrnoException).code ?? (err as Error).message})`);
  }
}

/** A path relative to the working directory when it is inside it. */
export function relativeOrAbsolute(p: string): string {
  const rel = relative(process.cwd(), p);
  return rel && !rel.startsWith('..') && !isAbsolute(rel) ? rel.split(sep).join('/') : p;
}
