// Which editor a JSON Lines file opens in: JSONL and NDJSON are text that people also edit, so the
// record view takes them by default only where it is right — a large file, or a setting that says
// so — and the text editor keeps the others, one click from the record view (the editor title's
// "Open in Record View"). Parquet, Arrow and compressed shards always open in the record view.

export type LinesMode = 'large' | 'always' | 'never';

export interface OpenFacts {
  fileName: string;
  sizeBytes: number | null;
  mode: LinesMode;
  largeBytes: number;
  /** Opened through "Open in Record View" (or reopened after the text editor had it). */
  explicit: boolean;
}

const LINES = /\.(jsonl|ndjson)$/i;

/** 'record' to stay in the record view, 'text' to hand the file to the text editor. */
export function openChoice(f: OpenFacts): 'record' | 'text' {
  if (!LINES.test(f.fileName) || f.explicit) return 'record';
  if (f.mode === 'always') return 'record';
  if (f.mode === 'never') return 'text';
  // Unknown size (a virtual file system that cannot say): the record view, which copes with any size.
  return f.sizeBytes === null || f.sizeBytes >= f.largeBytes ? 'record' : 'text';
}
