// Messages between a host thread (extension host or CLI) and its worker threads.

import type { EntryOutcome, Share } from '../engine/analyze.js';
import type { RenderedRecord } from '../engine/tokens/recordTokens.js';
import type { CheckConfig } from '../engine/config.js';
import type { OpenOptions } from '../engine/sources/index.js';
import type { ScanFacts, ScanNeeds } from '../engine/query.js';
import type { Entry, FileChange, Progress, SourceInfo } from '../engine/sources/source.js';
import type { ErrorKind } from '../engine/errors.js';

export type WorkerRequest =
  | { id: number; op: 'analyze'; path: string; config: CheckConfig; share: Share; open: OpenOptions }
  | { id: number; op: 'open'; path: string; open: OpenOptions; kept?: unknown }
  | { id: number; op: 'exportIndex' }
  | { id: number; op: 'read'; start: number; end: number; columns?: string[] }
  | { id: number; op: 'turnTokens'; value: unknown; config: CheckConfig }
  | { id: number; op: 'rendered'; value: unknown; config: CheckConfig }
  | { id: number; op: 'query'; needs: ScanNeeds; config: CheckConfig; entries: number }
  | { id: number; op: 'cancel'; target: number }
  | { id: number; op: 'learn'; entries: number[]; through: number }
  | { id: number; op: 'extend'; settled: boolean }
  | { id: number; op: 'memory' };

export type WorkerEvent =
  | { id: number; kind: 'progress'; progress: Progress }
  | { id: number; kind: 'info'; info: SourceInfo }
  | { id: number; kind: 'outcomes'; outcomes: EntryOutcome[] }
  | { id: number; kind: 'entries'; entries: Entry[] }
  | { id: number; kind: 'turnTokens'; turns: { pointer: string; role: string | null; tokens: number }[] }
  | { id: number; kind: 'rendered'; rendered: RenderedRecord | null }
  | { id: number; kind: 'memory'; rss: number; wasm: number; faults: number }
  | { id: number; kind: 'index'; index: unknown }
  | { id: number; kind: 'facts'; facts: ScanFacts }
  | { id: number; kind: 'change'; change: FileChange }
  | { id: number; kind: 'done' }
  | { id: number; kind: 'error'; message: string; errorKind: ErrorKind };
