// A record view's search, sort and filter: the order of entries it shows (a permutation of a
// subset, the file never rewritten) and the mapping between the view's positions and the file's
// entries. The facts that need the records come from a pass in the reading worker; the rest from
// the analysis the document holds.

import type { Finding } from '../engine/findings.js';
import { buildOrder, describeQuery, scanNeeds, type ViewQuery } from '../engine/query.js';
import type { ShardDocument } from './shardDocument.js';

export class ViewOrder {
  /** Position → entry. */
  readonly order: Int32Array;
  /** Entry → position, -1 where the entry is not shown. */
  private readonly inverse: Int32Array;
  readonly label: string;

  private constructor(
    readonly query: ViewQuery,
    order: Int32Array,
    entries: number,
  ) {
    this.order = order;
    this.inverse = new Int32Array(entries).fill(-1);
    order.forEach((e, p) => {
      if (e < entries) this.inverse[e] = p;
    });
    this.label = describeQuery(query);
  }

  get count(): number {
    return this.order.length;
  }

  entryAt(pos: number): number {
    return pos >= 0 && pos < this.order.length ? this.order[pos] : -1;
  }

  positionOf(entry: number): number {
    return entry >= 0 && entry < this.inverse.length ? this.inverse[entry] : -1;
  }

  /**
   * Builds a view over the document as analysed so far. Throws QueryError for a query that
   * cannot run (a bad regular expression); rejects with AbortError when a newer query replaced it.
   */
  static async build(doc: ShardDocument, q: ViewQuery, onProgress: (share: number) => void): Promise<ViewOrder> {
    const entries = doc.info?.entries ?? 0;
    const needs = scanNeeds(q);
    const facts = needs ? await doc.session!.query(needs, doc.settings.config, entries, (p) => onProgress(p.total ? p.done / p.total : 0)) : {};
    const recordOf = doc.entryRecords(entries);
    const order = buildOrder(entries, (e) => (recordOf[e] >= 0 ? recordOf[e] : null), q, facts, {
      tokensOf: (r) => doc.tally.tokensOf(r),
      findingsOf: (e) => doc.byEntry.get(e) ?? NONE,
      contextLength: doc.settings.config.contextLength,
    });
    return new ViewOrder(q, order, entries);
  }
}

const NONE: readonly Finding[] = [];
