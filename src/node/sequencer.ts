// Puts the outcomes of a pool's shares back in entry order and numbers their records. Shares are
// blocks of entries dealt round-robin; a worker does not parse the other shares' entries, so only
// here, where every entry's outcome arrives, is the count of records before an entry known.

import type { EntryOutcome } from '../engine/analyze.js';

export class OutcomeSequencer {
  private readonly queues: EntryOutcome[][];
  private readonly heads: number[];
  private readonly finished: boolean[];
  /** The next entry to deliver. */
  private next = 0;
  private records = 0;
  /** A share ended early (its file broke off, or it was stopped): the rest goes out as it comes, merged by entry. */
  private draining = false;

  constructor(
    private readonly count: number,
    private readonly block: number,
    private readonly deliver: (outcomes: EntryOutcome[]) => void,
  ) {
    this.queues = Array.from({ length: count }, () => []);
    this.heads = new Array<number>(count).fill(0);
    this.finished = new Array<boolean>(count).fill(false);
  }

  /** Outcomes waiting for an earlier share (a measure of how far the shares drift apart). */
  get waiting(): number {
    return this.queues.reduce((n, q, i) => n + q.length - this.heads[i], 0);
  }

  push(share: number, outcomes: EntryOutcome[]): void {
    const q = this.queues[share];
    for (const o of outcomes) q.push(o);
    this.pump();
  }

  /** The share sent everything it will send. */
  finish(share: number): void {
    this.finished[share] = true;
    this.pump();
  }

  private head(share: number): EntryOutcome | undefined {
    return this.queues[share][this.heads[share]];
  }

  private take(share: number): EntryOutcome {
    const o = this.queues[share][this.heads[share]++];
    // Drop what was delivered now and then, not on every outcome.
    if (this.heads[share] >= 4096) {
      this.queues[share] = this.queues[share].slice(this.heads[share]);
      this.heads[share] = 0;
    }
    return o;
  }

  private pump(): void {
    const out: EntryOutcome[] = [];
    for (;;) {
      let share: number;
      if (this.draining) {
        // The smallest entry queued, once every share still sending has something queued: one
        // that has not sent yet may still send a smaller entry.
        share = -1;
        let waiting = false;
        for (let i = 0; i < this.count; i++) {
          const h = this.head(i);
          if (!h) {
            if (!this.finished[i]) waiting = true;
            continue;
          }
          if (share < 0 || h.entry < this.head(share)!.entry) share = i;
        }
        if (share < 0 || waiting) break;
      } else {
        share = Math.floor(this.next / this.block) % this.count;
        const h = this.head(share);
        if (!h) {
          if (!this.finished[share]) break;
          this.draining = true;
          continue;
        }
        if (h.entry !== this.next) {
          // An entry without an outcome: the share skipped it; order holds no more.
          this.draining = true;
          continue;
        }
      }
      const o = this.take(share);
      this.number(o);
      this.next = o.entry + 1;
      out.push(o);
    }
    if (out.length) this.deliver(out);
  }

  private number(o: EntryOutcome): void {
    if (o.record === null) return;
    const r = this.records++;
    if (o.record === r) return;
    o.record = r;
    for (const f of o.findings) if (f.record !== null) f.record = r;
  }
}
