// One open shard: its reading worker (index + pages), its whole-file analysis (worker pool) and
// what that analysis found. Screens (record view, panel, Problems) only read from here.

import * as vscode from 'vscode';
import { mkdtemp, writeFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { EntryOutcome } from '../engine/analyze.js';
import type { Finding } from '../engine/findings.js';
import type { Progress, SourceInfo } from '../engine/sources/source.js';
import { ShardTally } from '../engine/stats/tally.js';
import { tokenizerLabel } from '../engine/tokens/kinds.js';
import { tokenizerOf } from '../engine/tokens/tokenizer.js';
import { analyzeFile, defaultWorkerCount } from '../node/pool.js';
import { SourceSession } from '../node/session.js';
import type { FindingView, ShardSummary } from '../protocol.js';
import { settingsFor, type HostSettings } from './settings.js';
import { traitsOf } from '../engine/sources/traits.js';
import { ResultsStore, type KeptResults } from './resultsStore.js';
import { FileFollower } from './fileWatch.js';
import { onlyContextLengthChanged, recontext, recordsNeedingPlaces, type RecordPlace } from './recontext.js';
import { locatePointer } from '../engine/json/locate.js';
import { formatPlace, targetIndex, type PlaceTarget } from '../engine/places.js';
import { initialProgress, nextProgress, panelText, windowText, type ProgressEvent, type ProgressState } from '../engine/progress.js';
import { isCancelled } from '../engine/errors.js';

/** Past this many entries without a record, the reading worker is not taught them (numbers stay as it counts). */
const MAX_TAUGHT = 5_000_000;
/** A new context length is answered from the kept counts only when at most this many records must be read to place their findings. */
const MAX_RECONTEXT_READS = 5_000;



/** A finding's place as every presenter shows it (one formatter: engine/places.ts). */
export function placeOf(f: { line: number | null; column: number | null; record: number | null; entry: number | null }): string {
  return formatPlace(f);
}

export class ShardDocument implements vscode.CustomDocument {
  private readonly changed = new vscode.EventEmitter<void>();
  /** Fires (throttled by listeners) when entries, findings or the phase change. */
  readonly onDidChange = this.changed.event;
  private readonly disposedEmitter = new vscode.EventEmitter<void>();
  readonly onDidDispose = this.disposedEmitter.event;
  private readonly reopenedEmitter = new vscode.EventEmitter<string>();
  /** Fires with a sentence when the file changed on disk (shorter, replaced) and was opened again. */
  readonly onDidReopen = this.reopenedEmitter.event;
  private follower: FileFollower | null = null;

  session: SourceSession | null = null;
  info: SourceInfo | null = null;
  settings!: HostSettings;
  tally = new ShardTally();
  /** Findings of each entry (for row markers and the detail pane). */
  byEntry = new Map<number, Finding[]>();
  /** Record index → entry index, learnt from the analysis. */
  private recordEntry = new Int32Array(0);
  phase: ShardSummary['phase'] = 'indexing';
  progress = 0;
  /** The one progress model every presenter reads (engine/progress.ts). */
  progressState: ProgressState = initialProgress();
  private step(ev: ProgressEvent): void {
    this.progressState = nextProgress(this.progressState, ev);
  }
  error?: string;
  /** True when the report shown was kept from an earlier check (no check ran for it). */
  kept = false;
  /** Where checked results are kept between sessions (set by the extension on activation). */
  static store: ResultsStore | null = null;
  private analysis: AbortController | null = null;
  private tempDir: string | null = null;
  /** The local file the engine reads (a temporary copy for non-file schemes). */
  localPath = '';
  private generation = 0;

  constructor(readonly uri: vscode.Uri) {}

  get fileName(): string {
    return this.uri.path.split('/').pop() ?? this.uri.toString();
  }

  async load(): Promise<void> {
    this.settings = await settingsFor(this.uri);
    this.localPath = await this.materialize();
    const session = new SourceSession(this.localPath, { maxLineBytes: this.settings.config.maxLineBytes, stallSeconds: this.settings.stallSeconds, maxReaderBytes: this.settings.config.maxReaderBytes }, {
      onInfo: (info) => {
        this.info = info;
        this.fire();
      },
      onProgress: (p) => {
        if (this.info) this.info = { ...this.info, entries: p.entries };
        if (this.phase === 'indexing') this.progress = p.total ? p.done / p.total : 0;
        this.step({ kind: 'indexing', done: p.done, total: p.total, entries: p.entries });
        this.fire();
      },
      onIndexed: (info) => {
        this.info = info;
        if (info.complete) this.step({ kind: 'indexed', entries: info.entries });
        this.fire();
      },
      onError: (message) => {
        this.error = message;
        this.fire();
      },
    });
    this.session = session;
    // Results kept from an earlier check of the same bytes and settings: the line index too, so the
    // file is not read again to be indexed.
    const kept = await this.fetchKept();
    await session.start(kept?.index);
    if (!(kept && this.restoreKept(kept))) void this.analyze(false);
    if (this.uri.scheme === 'file' && !this.disposed) this.follow(session);
  }

  /** Follows the file on disk (fileWatch.ts): growth extends the index, a changed file re-opens. */
  private follow(session: SourceSession): void {
    this.follower?.dispose();
    this.follower = new FileFollower(this.uri, this.localPath, {
      extend: (settled) => session.extend(settled),
      grew: (info) => {
        if (this.session !== session) return;
        this.info = info;
        this.step({ kind: 'indexed', entries: info.entries });
        this.fire();
      },
      // The check's results were for a shorter file: they are replaced by a new check.
      settled: () => {
        if (this.session === session) void this.analyze(false);
      },
      reopen: (sentence) => {
        if (this.session === session) void this.reopen(sentence);
      },
    });
  }

  /** The file is shorter or another one: a new reading worker and a new check. */
  private async reopen(sentence: string): Promise<void> {
    this.follower?.dispose();
    this.follower = null;
    this.analysis?.abort();
    this.generation++;
    this.session?.dispose();
    this.session = null;
    this.info = null;
    this.tally = new ShardTally();
    this.byEntry = new Map();
    this.recordEntry = new Int32Array(0);
    this.phase = 'indexing';
    this.progress = 0;
    this.progressState = initialProgress();
    this.kept = false;
    this.fire();
    try {
      await this.load();
    } catch (err) {
      this.phase = 'failed';
      this.error = (err as Error).message;
    }
    if (this.disposed) return;
    this.fire();
    this.reopenedEmitter.fire(sentence);
  }

  /** Copies a file from a non-file scheme into a temporary folder (never written back). */
  private async materialize(): Promise<string> {
    if (this.uri.scheme === 'file') return this.uri.fsPath;
    const stat = await vscode.workspace.fs.stat(this.uri);
    if (stat.size > this.settings.virtualFileMaxBytes) {
      throw new Error(
        `${this.fileName} is ${(stat.size / 2 ** 20).toFixed(0)} MiB on a remote or virtual file system; ` +
          `Shardwise reads such files only up to ${(this.settings.virtualFileMaxBytes / 2 ** 20).toFixed(0)} MiB ` +
          `(setting shardwise.virtualFiles.maxMiB). Open it from a local folder or a remote window instead.`,
      );
    }
    this.tempDir = await mkdtemp(join(tmpdir(), 'shardwise-copy-'));
    const local = join(this.tempDir, this.fileName);
    await writeFile(local, await vscode.workspace.fs.readFile(this.uri));
    return local;
  }

  /** Whole-file checks started by any shard (each one tokenises every record); read by the tests. */
  static checksStarted = 0;
  /** True when the report shown follows a new context length from the kept counts (no check ran for it). */
  recontexted = false;

  /**
   * The settings changed: a new context length alone is answered from the per-record token counts
   * already kept (no record is tokenised again); any other change checks the shard again.
   */
  async settingsChanged(): Promise<void> {
    const epoch = ++this.settingsEpoch;
    const before = this.settings;
    const after = await settingsFor(this.uri);
    if (epoch !== this.settingsEpoch) return; // a later change answers for both
    if (this.phase === 'done' && before && onlyContextLengthChanged(before.config, after.config) && (await this.recontext(after, epoch))) return;
    if (epoch !== this.settingsEpoch) return;
    this.settings = after;
    await this.analyze(false);
  }

  /** Counts settings changes, so that only the latest one is applied. */
  private settingsEpoch = 0;

  private async recontext(after: HostSettings, epoch: number): Promise<boolean> {
    const snap = this.tally.snapshot();
    const length = after.config.contextLength;
    const places = new Map<number, RecordPlace>();
    const want = recordsNeedingPlaces(snap, length);
    // Past a few thousand records to place, a new check is as quick as reading each one.
    if (want.length > MAX_RECONTEXT_READS) return false;
    const gen = this.generation;
    // A record's place, as the analysis gives it: its entry, line and the column where its value starts.
    const entries = want.map((r) => this.recordEntry[r] ?? -1);
    if (entries.some((e) => e < 0) || !this.session) return false;
    for (const [i, e] of entries.entries()) {
      const [x] = await this.session.read(e, e + 1);
      if (!x) return false;
      const column = x.line !== null && x.text !== undefined ? (locatePointer(x.text, '')?.column ?? 1) : null;
      places.set(want[i], { entry: e, line: x.line, column });
    }
    // Another change (a new check, another context length) came while the places were read: it
    // owns the document now, and this one has nothing more to do.
    if (gen !== this.generation || epoch !== this.settingsEpoch) return true;
    const next = recontext(snap, length, places, { tokenizer: tokenizerLabel(tokenizerOf(after.config)), rendered: snap.renderedTotal !== null, rules: after.config.rules });
    if (!next) return false;
    ++this.generation;
    this.analysis?.abort();
    this.settings = after;
    this.tally = ShardTally.restore(next);
    this.byId = new Map();
    this.ids = new WeakMap();
    this.indexFindings();
    this.recontexted = true;
    this.fire();
    void this.keep();
    return true;
  }

  /** Runs (or re-runs, after a settings change) the whole-file analysis with progress. */
  async analyze(rereadSettings = true): Promise<void> {
    ShardDocument.checksStarted++;
    this.recontexted = false;
    this.analysis?.abort();
    const ac = new AbortController();
    this.analysis = ac;
    const gen = ++this.generation;
    if (rereadSettings) this.settings = await settingsFor(this.uri);
    this.tally = new ShardTally();
    this.byEntry = new Map();
    this.byId = new Map();
    this.ids = new WeakMap();
    this.recordEntry = new Int32Array(0);
    this.phase = 'analysing';
    this.progress = 0;
    this.kept = false;
    this.step({ kind: 'check-restarted' });
    // The results are kept only under the key of the bytes the check started on.
    const startKey = this.uri.scheme === 'file' ? ResultsStore.keyFor(this.localPath, this.settings.config) : null;
    this.error = this.settings.projectProblem ?? this.settings.schemaProblem ?? this.settings.tokenizerProblem;
    this.fire();
    const workers = this.settings.workers || defaultWorkerCount();
    try {
      await vscode.window.withProgress(
        // The window's progress location (status bar), not a notification on every open; Stop is in the view's title bar.
        { location: vscode.ProgressLocation.Window, title: `Checking ${this.fileName}`, cancellable: true },
        async (report, token) => {
          token.onCancellationRequested(() => {
            ac.abort();
            if (!this.info?.complete) this.session?.cancelIndexing();
          });
          let lastPct = 0;
          await analyzeFile(this.localPath, {
            config: this.settings.config,
            open: { maxLineBytes: this.settings.config.maxLineBytes, stallSeconds: this.settings.stallSeconds, maxReaderBytes: this.settings.config.maxReaderBytes },
            workers,
            signal: ac.signal,
            onFileFindings: (fs) => {
              if (gen !== this.generation) return;
              for (const f of fs) this.addFinding(f);
            },
            onProgress: (p: Progress) => {
              if (gen !== this.generation) return;
              const pct = p.total ? (100 * p.done) / p.total : 0;
              this.progress = pct / 100;
              this.step({ kind: 'checking', done: p.done, total: p.total, records: this.tally.records });
              if (pct - lastPct >= 1) {
                report.report({ increment: pct - lastPct, message: windowText(this.progressState) });
                lastPct = pct;
              }
              this.fire();
            },
            onOutcomes: (os) => {
              if (gen !== this.generation) return;
              for (const o of os) this.addOutcome(o);
              this.fire();
            },
          });
        },
      );
      if (gen !== this.generation) return;
      this.phase = 'done';
      this.progress = 1;
      this.teachRecords();
      this.step({ kind: 'checked', records: this.tally.records });
      void this.keep(startKey);
    } catch (err) {
      if (gen !== this.generation) return;
      if (isCancelled(err)) {
        this.phase = 'cancelled';
        this.step({ kind: 'check-cancelled' });
      } else {
        this.phase = 'failed';
        this.step({ kind: 'check-failed' });
        this.error = (err as Error).message;
      }
    }
    this.fire();
  }

  /** The results kept from an earlier check of the same bytes and settings, if any. */
  private async fetchKept(): Promise<KeptResults | null> {
    const store = ShardDocument.store;
    if (!store || this.uri.scheme !== 'file') return null;
    const key = await ResultsStore.keyFor(this.localPath, this.settings.config);
    return key ? store.get(key) : null;
  }

  /** Files the tally's findings under their entries (after a tally was restored rather than built). */
  private indexFindings(): void {
    this.byEntry = new Map();
    for (const f of this.tally.findings) {
      if (f.entry === null) continue;
      const list = this.byEntry.get(f.entry) ?? [];
      list.push(f);
      this.byEntry.set(f.entry, list);
    }
  }

  /** Shows results kept from an earlier check; false when they cannot be used. */
  private restoreKept(kept: KeptResults): boolean {
    try {
      this.tally = ShardTally.restore(kept.tally);
    } catch {
      return false;
    }
    this.recordEntry = Int32Array.from(kept.recordEntry);
    this.indexFindings();
    this.phase = 'done';
    this.progress = 1;
    this.kept = true;
    this.teachRecords();
    this.step({ kind: 'checked', records: this.tally.records });
    this.fire();
    return true;
  }

  private async keep(startKey: Promise<string | null> | null = null): Promise<void> {
    const store = ShardDocument.store;
    if (!store || this.uri.scheme !== 'file') return;
    const key = await ResultsStore.keyFor(this.localPath, this.settings.config);
    if (!key) return;
    // A file that changed (grew, was rewritten) while it was checked: its results are not kept.
    if (startKey && (await startKey) !== key) return;
    let last = this.recordEntry.length;
    while (last > 0 && this.recordEntry[last - 1] < 0) last--;
    const index = await this.session?.exportIndex().catch(() => null);
    await store.put({ key, tally: this.tally.snapshot(), recordEntry: Array.from(this.recordEntry.subarray(0, last)), ...(index ? { index } : {}) }).catch(() => undefined);
  }

  cancel(): void {
    this.analysis?.abort();
    this.session?.cancelIndexing();
  }

  private addOutcome(o: EntryOutcome): void {
    this.tally.add(o);
    if (o.record !== null) {
      if (o.record >= this.recordEntry.length) {
        let size = Math.max(1024, this.recordEntry.length);
        while (size <= o.record) size *= 2;
        const next = new Int32Array(size).fill(-1);
        next.set(this.recordEntry);
        this.recordEntry = next;
      }
      this.recordEntry[o.record] = o.entry;
    }
    if (o.findings.length) {
      const list = this.byEntry.get(o.entry) ?? [];
      list.push(...o.findings);
      this.byEntry.set(o.entry, list);
    }
  }

  private addFinding(f: Finding): void {
    this.tally.addFinding(f);
    if (f.entry !== null) {
      const list = this.byEntry.get(f.entry) ?? [];
      list.push(f);
      this.byEntry.set(f.entry, list);
    }
  }

  /** Resolves once `n` entries are indexed (or the index is complete, or `ms` have passed). */
  whenEntries(n: number, ms: number): Promise<void> {
    return new Promise((resolve) => {
      const ready = () => !this.info || this.info.complete || this.info.entries >= n || this.phase === 'failed';
      if (ready()) return resolve();
      const timer = setTimeout(done, ms);
      const sub = this.onDidChange(() => {
        if (ready()) done();
      });
      function done() {
        clearTimeout(timer);
        sub.dispose();
        resolve();
      }
    });
  }

  /**
   * Hands the reading worker the entries the complete analysis found to hold no record, so that
   * the record numbers of the pages it reads are exact (its index does not parse lines itself).
   */
  private teachRecords(): void {
    const entries = this.info?.complete ? this.info.entries : -1;
    if (entries < 0 || !this.session) return;
    const gaps: number[] = [];
    let next = 0;
    // The map grows by doubling: its tail past the last record is padding, not a record missing.
    let last = this.recordEntry.length;
    while (last > 0 && this.recordEntry[last - 1] < 0) last--;
    if (last !== this.tally.records) return;
    for (let r = 0; r < last; r++) {
      const e = this.recordEntry[r];
      if (e < 0) return;
      for (; next < e && gaps.length <= MAX_TAUGHT; next++) gaps.push(next);
      next = e + 1;
    }
    for (; next < entries && gaps.length <= MAX_TAUGHT; next++) gaps.push(next);
    if (gaps.length > MAX_TAUGHT) return;
    this.session.learnNonRecords(gaps, entries);
  }

  /**
   * The token count of a page's record, when the analysis has counted that very entry: a record
   * number the reading worker could not make exact yet never shows another record's count.
   */
  tokensOfEntry(e: { entry: number; record: number | null }): number | null {
    if (e.record === null || e.record >= this.recordEntry.length || this.recordEntry[e.record] !== e.entry) return null;
    return this.tally.tokensOf(e.record);
  }

  /** The entry holding a record: exact once the analysis passed it, else the record number itself. */
  entryOfRecord(record: number): number {
    const e = record < this.recordEntry.length ? this.recordEntry[record] : -1;
    return e >= 0 ? e : record;
  }

  /** Entry → record index (-1 where the entry holds none), as far as the analysis has come. */
  entryRecords(entries: number): Int32Array {
    const out = new Int32Array(entries).fill(-1);
    for (let r = 0; r < this.recordEntry.length; r++) {
      const e = this.recordEntry[r];
      if (e >= 0 && e < entries) out[e] = r;
    }
    return out;
  }

  /** The entry a typed place names (palette and record view alike), or -1 when the shard has none. */
  entryOfPlace(t: PlaceTarget): number {
    const i = targetIndex(t);
    if ('record' in i) return i.record < this.recordEntry.length && this.recordEntry[i.record] >= 0 ? this.recordEntry[i.record] : this.info?.complete ? -1 : i.record;
    if ('entry' in i) return i.entry;
    return this.entryOfLine(i.line);
  }

  /** Entry for a 1-based line (JSONL: one entry per line). */
  entryOfLine(line: number): number {
    return Math.max(0, line - 1);
  }

  summary(): ShardSummary {
    return {
      path: this.uri.fsPath || this.uri.toString(),
      fileName: this.fileName,
      format: this.info?.format ?? 'jsonl',
      sizeBytes: this.info?.sizeBytes ?? 0,
      entries: Math.max(this.info?.entries ?? 0, this.tally.entries),
      records: this.tally.records,
      blankLines: this.tally.blankLines,
      invalidLines: this.tally.invalidLines,
      tokens: this.tally.tokenSummary(tokenizerOf(this.settings.config), this.settings.config.contextLength),
      tokenizerLabel: tokenizerLabel(tokenizerOf(this.settings.config)),
      layout: this.tally.layout(),
      findingsBySeverity: { ...this.tally.bySeverity },
      findingsByRule: Object.fromEntries(this.tally.byRule),
      phase: this.phase,
      progress: this.progress,
      progressText: `${panelText(this.progressState, this.info ? traitsOf(this.info.format).entries : 'lines').text}${this.kept ? ' (kept from an earlier check)' : ''}${this.recontexted ? ' (context length changed: the kept token counts were used)' : ''}`,
      indexed: this.progressState.indexComplete ? 1 : this.progressState.indexed,
      error: this.error,
    };
  }

  private ids = new WeakMap<Finding, number>();
  private byId = new Map<number, Finding>();
  private nextId = 0;
  /** Findings in file order, capped, each with an id that stays valid while the analysis runs on. */
  findingViews(cap: number): FindingView[] {
    return this.tally
      .sortedFindings()
      .slice(0, cap)
      .map((f) => this.viewOf(f));
  }

  findingById(id: number): Finding | undefined {
    return this.byId.get(id);
  }

  viewOf(f: Finding): FindingView {
    let id = this.ids.get(f);
    if (id === undefined) {
      id = this.nextId++;
      this.ids.set(f, id);
      this.byId.set(id, f);
    }
    return { ...f, id, place: placeOf(f) };
  }

  private fire(): void {
    this.changed.fire();
  }

  /** How long a shard whose last record view closed stays ready to come back (see `revive`). */
  static lingerMs = 5000;
  private lingerTimer: NodeJS.Timeout | null = null;
  private disposed = false;

  /**
   * VS Code calls this when the shard's last record view closes. The shard stays `lingerMs` longer:
   * a record view that a moment's preview replaced (a Problems entry opening in its preview tab)
   * comes back without indexing and checking again.
   */
  dispose(): void {
    if (this.disposed || this.lingerTimer) return;
    if (ShardDocument.lingerMs <= 0) return this.disposeNow();
    this.lingerTimer = setTimeout(() => this.disposeNow(), ShardDocument.lingerMs);
  }

  /** Takes back a lingering shard for a new record view; false when it is gone (or was never closed). */
  revive(): boolean {
    if (this.disposed || !this.lingerTimer) return false;
    clearTimeout(this.lingerTimer);
    this.lingerTimer = null;
    return true;
  }

  private disposeNow(): void {
    if (this.disposed) return;
    this.disposed = true;
    this.lingerTimer = null;
    this.analysis?.abort();
    this.follower?.dispose();
    this.session?.dispose();
    if (this.tempDir) void rm(this.tempDir, { recursive: true, force: true });
    this.disposedEmitter.fire();
    this.changed.dispose();
    this.disposedEmitter.dispose();
    this.reopenedEmitter.dispose();
  }
}
