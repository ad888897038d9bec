// One progress model for a shard: indexing (finding where lines or rows are) and checking (every
// record through the checks) are two phases, each with its own share of the file, and every
// presenter — the record view's header, the panel, the window's progress — reads its words and
// numbers from here, so they never contradict each other.

export type CheckPhase = 'waiting' | 'checking' | 'done' | 'failed' | 'cancelled';

export interface ProgressState {
  /** Share of the file indexed (0..1) and whether the index is complete. */
  indexed: number;
  indexComplete: boolean;
  /** Lines or rows found so far. */
  entries: number;
  /** Share of the file checked (0..1) and the checking phase. */
  checked: number;
  check: CheckPhase;
  /** Records checked so far. */
  records: number;
}

export function initialProgress(): ProgressState {
  return { indexed: 0, indexComplete: false, entries: 0, checked: 0, check: 'waiting', records: 0 };
}

export type ProgressEvent =
  | { kind: 'indexing'; done: number; total: number; entries: number }
  | { kind: 'indexed'; entries: number }
  | { kind: 'checking'; done: number; total: number; records: number }
  | { kind: 'checked'; records: number }
  | { kind: 'check-failed' }
  | { kind: 'check-cancelled' }
  | { kind: 'check-restarted' };

const share = (done: number, total: number) => (total > 0 ? Math.max(0, Math.min(1, done / total)) : 0);

/** The next state; shares never go backwards within a phase (the slowest worker's report can lag). */
export function nextProgress(s: ProgressState, ev: ProgressEvent): ProgressState {
  switch (ev.kind) {
    case 'indexing':
      return { ...s, indexed: Math.max(s.indexed, share(ev.done, ev.total)), entries: Math.max(s.entries, ev.entries) };
    case 'indexed':
      return { ...s, indexed: 1, indexComplete: true, entries: ev.entries };
    case 'checking':
      return { ...s, check: 'checking', checked: Math.max(s.checked, share(ev.done, ev.total)), records: Math.max(s.records, ev.records) };
    case 'checked':
      return { ...s, check: 'done', checked: 1, records: ev.records };
    case 'check-failed':
      return { ...s, check: 'failed' };
    case 'check-cancelled':
      return { ...s, check: 'cancelled' };
    case 'check-restarted':
      return { ...s, check: 'checking', checked: 0, records: 0 };
  }
}

const pct = (x: number) => `${Math.floor(x * 100)}%`;
const n = (x: number) => x.toLocaleString('en-US');

/** The record view's header: the index's own share, only while indexing. */
export function headerText(s: ProgressState): string | null {
  return s.indexComplete ? null : `indexing ${pct(s.indexed)}`;
}

/** The panel's line under the file name, and whether its figures are final. */
export function panelText(s: ProgressState, unit: 'lines' | 'rows'): { text: string; final: boolean } {
  const index = s.indexComplete ? `${n(s.entries)} ${unit}` : `indexing ${pct(s.indexed)} (${n(s.entries)} ${unit} so far)`;
  switch (s.check) {
    case 'waiting':
      return { text: `${index} · checking not started`, final: false };
    case 'checking':
      return { text: `${index} · checked ${pct(s.checked)} (${n(s.records)} records so far)`, final: false };
    case 'done':
      return { text: `${index} · checked: ${n(s.records)} records`, final: true };
    case 'failed':
      return { text: `${index} · the check failed after ${n(s.records)} records`, final: false };
    case 'cancelled':
      return { text: `${index} · stopped after ${n(s.records)} records (checked so far)`, final: false };
  }
}

/** The window's progress message. */
export function windowText(s: ProgressState): string {
  return s.indexComplete ? `${pct(s.checked)} checked` : `${pct(s.indexed)} indexed, ${pct(s.checked)} checked`;
}
