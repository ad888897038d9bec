// Following an open shard on disk: a job still writing it makes it grow (the reading worker
// extends its index; the view's count follows), a truncated or replaced file is opened again, and
// once the file has stopped growing for a while the whole-file check runs again. A file system
// watcher tells of most changes; a cheap poll of size and modification time while the record view
// is visible catches writers the watcher misses.

import * as vscode from 'vscode';
import { stat } from 'node:fs/promises';
import type { FileChange, SourceInfo } from '../engine/sources/source.js';

/** How often the file's size and modification time are looked at while its view is visible. */
export const POLL_MS = 2000;
/** The file counts as settled (and is checked again) after this long without growing. */
export const SETTLE_MS = 2000;

export interface FollowTarget {
  /** Asks the reading worker to look again (extending its index where it can). */
  extend(settled: boolean): Promise<FileChange>;
  /** New entries were indexed. */
  grew(info: SourceInfo): void;
  /** The file stopped growing: check it again. */
  settled(): void;
  /** The file is shorter or another one: open it again, saying why. */
  reopen(sentence: string): void;
}

/** The sentence the record view shows when a changed file was opened again. */
export function reopenSentence(change: FileChange['change']): string {
  const why = change === 'shorter' ? 'it is shorter than before' : 'it was replaced or rewritten';
  return `The file changed on disk (${why}); it was opened again.`;
}

interface Seen {
  size: number;
  mtimeMs: number;
  ino: number;
}

export class FileFollower implements vscode.Disposable {
  private readonly subs: vscode.Disposable[] = [];
  private poll: NodeJS.Timeout | null = null;
  private settleTimer: NodeJS.Timeout | null = null;
  private seen: Seen | null = null;
  private busy = false;
  private again = false;
  private grown = false;
  private disposed = false;

  constructor(
    private readonly uri: vscode.Uri,
    private readonly localPath: string,
    private readonly target: FollowTarget,
    private readonly pollMs = POLL_MS,
    private readonly settleMs = SETTLE_MS,
  ) {
    const dir = vscode.Uri.joinPath(uri, '..');
    const name = uri.path.split('/').pop() ?? '';
    const watcher = vscode.workspace.createFileSystemWatcher(new vscode.RelativePattern(dir, name));
    const poke = () => void this.check();
    this.subs.push(watcher, watcher.onDidChange(poke), watcher.onDidCreate(poke), watcher.onDidDelete(poke));
    this.poll = setInterval(() => {
      if (this.visible()) void this.check();
    }, this.pollMs);
    this.poll.unref?.();
    // Nothing seen yet: the first look asks the worker (the file may have grown since it was opened).
    void this.check();
  }

  /** Whether a tab showing the shard is the visible one of its group. */
  private visible(): boolean {
    const key = this.uri.toString();
    for (const g of vscode.window.tabGroups.all) {
      const t = g.activeTab;
      const input = t?.input;
      if (input instanceof vscode.TabInputCustom && input.uri.toString() === key) return true;
    }
    return false;
  }

  private async look(): Promise<Seen | null> {
    try {
      const st = await stat(this.localPath);
      return { size: st.size, mtimeMs: st.mtimeMs, ino: st.ino };
    } catch {
      return null;
    }
  }

  /** Looks at the file; when its size, time or identity moved, asks the worker. One at a time. */
  async check(): Promise<void> {
    if (this.disposed) return;
    if (this.busy) {
      this.again = true;
      return;
    }
    this.busy = true;
    try {
      do {
        this.again = false;
        const now = await this.look();
        const was = this.seen;
        if (was && now && was.size === now.size && was.mtimeMs === now.mtimeMs && was.ino === now.ino) continue;
        const r = await this.target.extend(false);
        if (this.disposed) return;
        this.seen = now;
        this.handle(r);
      } while (this.again && !this.disposed);
    } catch {
      // A worker that is gone or stopped has told the view already.
    } finally {
      this.busy = false;
    }
  }

  private handle(r: FileChange): void {
    if (r.change === 'grew') {
      this.grown = true;
      this.target.grew(r.info);
      this.armSettle();
    } else if (r.change === 'shorter' || r.change === 'replaced') {
      this.dispose();
      this.target.reopen(reopenSentence(r.change));
    }
  }

  private armSettle(): void {
    if (this.settleTimer) clearTimeout(this.settleTimer);
    this.settleTimer = setTimeout(() => void this.settle(), this.settleMs);
  }

  private async settle(): Promise<void> {
    this.settleTimer = null;
    if (this.disposed || !this.grown) return;
    if (this.busy) return this.armSettle();
    this.busy = true;
    try {
      // Looked at before the worker does: growth after this point is seen by the next look.
      const now = await this.look();
      const r = await this.target.extend(true);
      if (this.disposed) return;
      this.seen = now;
      if (r.change === 'none') {
        this.grown = false;
        this.target.settled();
      } else this.handle(r);
    } catch {
      // As in check().
    } finally {
      this.busy = false;
    }
  }

  dispose(): void {
    this.disposed = true;
    if (this.poll) clearInterval(this.poll);
    if (this.settleTimer) clearTimeout(this.settleTimer);
    this.poll = this.settleTimer = null;
    for (const s of this.subs.splice(0)) s.dispose();
  }
}
