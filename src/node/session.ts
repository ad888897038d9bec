// A record view's private worker: it opens the shard, indexes it, and serves page reads, so the
// extension host's thread stays free. A worker whose WebAssembly memory passes a budget is
// replaced (wasm memory never shrinks).

import { Worker } from 'node:worker_threads';
import type { CheckConfig } from '../engine/config.js';
import { traitsOf } from '../engine/sources/traits.js';
import type { ScanFacts, ScanNeeds } from '../engine/query.js';
import type { OpenOptions } from '../engine/sources/index.js';
import type { Entry, FileChange, Progress, SourceInfo } from '../engine/sources/source.js';
import type { WorkerEvent, WorkerRequest } from './messages.js';
import { workerScriptPath } from './pool.js';
import { DEFAULT_STALL_SECONDS } from '../engine/sources/index.js';
import { installTempCleanup } from '../engine/sources/tempFiles.js';
import { errorFromWire } from '../engine/errors.js';

type Pending = { resolve: (ev: WorkerEvent) => void; reject: (e: Error) => void };

export interface SessionEvents {
  onInfo(info: SourceInfo): void;
  onProgress(p: Progress): void;
  onIndexed(info: SourceInfo): void;
  onError(message: string): void;
}

export class SourceSession {
  private worker: Worker | null = null;
  private nextId = 1;
  private pending = new Map<number, Pending>();
  private openId = 0;
  private disposed = false;
  private indexed = false;
  private lastInfo: SourceInfo | null = null;

  constructor(
    private readonly path: string,
    private readonly open: OpenOptions,
    private readonly events: SessionEvents,
    private readonly wasmBudget = 768 * 1024 * 1024,
    private readonly script = workerScriptPath(),
  ) {}

  /** Why the worker was stopped by the watchdog, once it has been. */
  private stopped: string | null = null;
  private lastMove = Date.now();
  private indexing = false;
  private watchdog: ReturnType<typeof setInterval> | null = null;

  /**
   * The watchdog: while the worker owes an answer (indexing, a page, a token count) and sends
   * nothing for the set time, it is ended, every pending request fails with a clear sentence and
   * the view is told, instead of a frozen panel.
   */
  private watch(): void {
    const seconds = this.open.stallSeconds ?? DEFAULT_STALL_SECONDS;
    if (seconds <= 0 || this.watchdog) return;
    this.watchdog = setInterval(() => {
      const busy = this.indexing || [...this.pending.keys()].some((id) => id !== this.openId);
      if (!busy) {
        this.lastMove = Date.now();
        return;
      }
      if (Date.now() - this.lastMove < seconds * 1000) return;
      const message = `stopped: no progress for ${seconds} s while reading ${this.path} (no record, no byte); the reader was ended`;
      this.stopped = message;
      this.indexing = false;
      const w = this.worker;
      this.worker = null;
      void w?.terminate();
      for (const p of this.pending.values()) p.reject(new Error(message));
      this.pending.clear();
      this.route.clear();
      this.events.onError(message);
    }, Math.min(1000, seconds * 250));
    this.watchdog.unref?.();
  }

  /** A kept index of the same bytes, offered to the worker instead of indexing. */
  private kept: unknown = undefined;

  /** Opens the shard and starts indexing (or takes `kept`, an index kept earlier); resolves with the first description. */
  start(kept?: unknown): Promise<SourceInfo> {
    this.kept = kept;
    installTempCleanup();
    this.spawn();
    this.watch();
    this.indexing = true;
    this.lastMove = Date.now();
    return new Promise<SourceInfo>((resolve, reject) => {
      let first = true;
      this.openId = this.nextId++;
      this.pending.set(this.openId, {
        resolve: () => undefined,
        reject,
      });
      const id = this.openId;
      this.route.set(id, (ev) => {
        switch (ev.kind) {
          case 'info':
            this.lastInfo = ev.info;
            if (first) {
              first = false;
              this.events.onInfo(ev.info);
              resolve(ev.info);
            } else {
              this.indexed = ev.info.complete;
              this.events.onIndexed(ev.info);
            }
            break;
          case 'progress':
            this.events.onProgress(ev.progress);
            break;
          case 'done':
            this.indexing = false;
            this.pending.delete(id);
            this.route.delete(id);
            break;
          case 'error':
            this.indexing = false;
            this.pending.delete(id);
            this.route.delete(id);
            if (first) reject(new Error(ev.message));
            else if (ev.errorKind !== 'cancelled') this.events.onError(ev.message);
            break;
        }
      });
      this.post({ id, op: 'open', path: this.path, open: this.open, kept: this.kept });
    });
  }

  /** The worker's finished index as plain JSON, to keep (null when there is none worth keeping). */
  async exportIndex(): Promise<unknown> {
    const ev = await this.request({ id: this.nextId++, op: 'exportIndex' });
    return ev.kind === 'index' ? ev.index : null;
  }

  get isIndexed(): boolean {
    return this.indexed;
  }

  /** Tells the reading worker which entries below `through` hold no record (from the analysis). */
  learnNonRecords(entries: number[], through: number): void {
    if (this.worker) this.post({ id: this.nextId++, op: 'learn', entries, through });
  }

  /**
   * The file changed on disk: the worker extends the index over appended bytes, or says the file
   * must be opened again (`settled`: it has stopped growing).
   */
  async extend(settled: boolean): Promise<FileChange> {
    const ev = await this.request({ id: this.nextId++, op: 'extend', settled });
    if (ev.kind !== 'change') throw new Error('unexpected answer from the shard worker');
    if (ev.change.change === 'grew') this.lastInfo = ev.change.info;
    return ev.change;
  }

  cancelIndexing(): void {
    if (this.openId) this.post({ id: this.nextId++, op: 'cancel', target: this.openId });
  }

  async read(start: number, end: number, columns?: string[]): Promise<Entry[]> {
    const ev = await this.request({ id: this.nextId++, op: 'read', start, end, columns });
    if (ev.kind !== 'entries') throw new Error('unexpected answer from the shard worker');
    void this.maybeRecycle();
    return ev.entries;
  }

  async turnTokens(value: unknown, config: CheckConfig) {
    const ev = await this.request({ id: this.nextId++, op: 'turnTokens', value, config });
    if (ev.kind !== 'turnTokens') throw new Error('unexpected answer from the shard worker');
    return ev.turns;
  }

  /** The record rendered with the model's chat template (null without one), computed in the worker. */
  async rendered(value: unknown, config: CheckConfig) {
    const ev = await this.request({ id: this.nextId++, op: 'rendered', value, config });
    if (ev.kind !== 'rendered') throw new Error('unexpected answer from the shard worker');
    return ev.rendered;
  }

  private queryId = 0;

  /**
   * Gathers a query's facts over the whole shard in the worker (a pass of its own), streaming
   * progress; a new query cancels the one before.
   */
  query(needs: ScanNeeds, config: CheckConfig, entries: number, onProgress: (p: Progress) => void): Promise<ScanFacts> {
    if (this.queryId) this.post({ id: this.nextId++, op: 'cancel', target: this.queryId });
    const id = this.nextId++;
    this.queryId = id;
    return new Promise<ScanFacts>((resolve, reject) => {
      this.pending.set(id, { resolve: () => undefined, reject });
      this.route.set(id, (ev) => {
        if (ev.kind === 'progress') return onProgress(ev.progress);
        this.pending.delete(id);
        this.route.delete(id);
        if (this.queryId === id) this.queryId = 0;
        if (ev.kind === 'facts') resolve(ev.facts);
        else if (ev.kind === 'error') {
          reject(errorFromWire(ev.errorKind, ev.message));
        } else reject(new Error('unexpected answer from the shard worker'));
      });
      this.post({ id, op: 'query', needs, config, entries });
    });
  }

  dispose(): void {
    this.disposed = true;
    if (this.watchdog) clearInterval(this.watchdog);
    this.watchdog = null;
    for (const p of this.pending.values()) p.reject(new Error('the record view was closed'));
    this.pending.clear();
    void this.worker?.terminate();
    this.worker = null;
  }

  // ---- internals ----

  private route = new Map<number, (ev: WorkerEvent) => void>();

  private spawn(): void {
    const w = new Worker(this.script);
    this.worker = w;
    w.on('message', (ev: WorkerEvent) => {
      if (this.worker === w) this.lastMove = Date.now();
      const r = this.route.get(ev.id);
      if (r) return r(ev);
      const p = this.pending.get(ev.id);
      if (!p) return;
      this.pending.delete(ev.id);
      if (ev.kind === 'error') {
        p.reject(errorFromWire(ev.errorKind, ev.message));
      } else p.resolve(ev);
    });
    w.on('error', (e) => this.events.onError(`the shard worker failed: ${e.message}`));
    w.on('exit', (code) => {
      if (this.worker !== w || this.disposed) return;
      this.worker = null;
      for (const p of this.pending.values()) p.reject(new Error(`the shard worker stopped (exit code ${code})`));
      this.pending.clear();
      this.events.onError(`the shard worker stopped (exit code ${code})`);
    });
  }

  private request(req: WorkerRequest): Promise<WorkerEvent> {
    if (this.disposed) return Promise.reject(new Error('the record view was closed'));
    if (this.stopped) return Promise.reject(new Error(this.stopped));
    if (this.pending.size === 0 || [...this.pending.keys()].every((id) => id === this.openId)) this.lastMove = Date.now();
    return new Promise((resolve, reject) => {
      this.pending.set(req.id, { resolve, reject });
      this.post(req);
    });
  }

  private post(req: WorkerRequest): void {
    this.worker?.postMessage(req);
  }

  private recycling = false;
  private async maybeRecycle(): Promise<void> {
    // Only sources without a text index are replaced: re-opening them costs a footer read.
    if (this.recycling || this.disposed || !this.lastInfo || !traitsOf(this.lastInfo.format).wasmMemory) return;
    try {
      const ev = await this.request({ id: this.nextId++, op: 'memory' });
      // A decoder that panicked may hold broken state: replace its worker too.
      if (ev.kind !== 'memory' || (ev.wasm < this.wasmBudget && ev.faults === 0)) return;
      this.recycling = true;
      const old = this.worker;
      this.route.clear();
      this.spawn();
      void old?.terminate();
      await new Promise<void>((resolve, reject) => {
        const id = (this.openId = this.nextId++);
        this.route.set(id, (e) => {
          if (e.kind === 'done') {
            this.route.delete(id);
            resolve();
          } else if (e.kind === 'error') {
            this.route.delete(id);
            reject(new Error(e.message));
          }
        });
        this.post({ id, op: 'open', path: this.path, open: this.open, kept: this.kept });
      });
    } catch {
      // A failed recycle leaves the old behaviour: reads go on in whatever worker exists.
    } finally {
      this.recycling = false;
    }
  }
}
