// Byte-pair encoding over a published rank table: pre-tokenize with a pattern, then merge the
// bytes of each piece lowest rank first (leftmost on ties), as the reference tokenizer does.

/** A rank table as js-tiktoken ships it: pattern, special tokens, compressed base64 ranks. */
export interface RankTable {
  pat_str: string;
  special_tokens: Record<string, number>;
  bpe_ranks: string;
}

export interface EncoderOptions {
  /** Pieces at least this many bytes long merge with a heap (O(n log n)) instead of rescanning. */
  heapThreshold?: number;
  /** Most distinct pieces remembered; the memo is emptied when full. */
  memoLimit?: number;
}

// Pieces repeat heavily in natural text; longer ones rarely do and would only bloat the memo.
const MEMO_PIECE_MAX_CHARS = 48;
const ASCII_ONLY = /^[\x00-\x7f]*$/;

/** Decodes js-tiktoken's compressed rank list (`! <first rank> <base64> <base64> ...` per line). */
export function decodeRanks(compressed: string): Map<string, number> {
  const ranks = new Map<string, number>();
  for (const line of compressed.split('\n')) {
    if (line === '') continue;
    const fields = line.split(' ');
    const first = Number.parseInt(fields[1] ?? '', 10);
    if (!Number.isInteger(first)) throw new Error(`rank table: bad line start "${line.slice(0, 40)}"`);
    for (let i = 2; i < fields.length; i++) {
      // atob yields one char per byte: the same keys `bytesKey` builds from text.
      ranks.set(atob(fields[i]!), first + i - 2);
    }
  }
  return ranks;
}

const utf8 = new TextEncoder();

/** UTF-8 bytes of text as a string with one char (0-255) per byte; lone surrogates become U+FFFD. */
export function bytesKey(text: string): string {
  if (ASCII_ONLY.test(text)) return text;
  const bytes = utf8.encode(text);
  let out = '';
  const step = 8192;
  for (let i = 0; i < bytes.length; i += step) {
    out += String.fromCharCode.apply(null, bytes.subarray(i, i + step) as unknown as number[]);
  }
  return out;
}

export class BytePairEncoder {
  private readonly ranks: Map<string, number>;
  private readonly pattern: RegExp;
  private readonly memo = new Map<string, number[]>();
  private readonly heapThreshold: number;
  private readonly memoLimit: number;

  constructor(ranks: Map<string, number>, patternSource: string, options: EncoderOptions = {}) {
    this.ranks = ranks;
    this.pattern = new RegExp(patternSource, 'gu');
    this.heapThreshold = options.heapThreshold ?? 128;
    this.memoLimit = options.memoLimit ?? 200_000;
  }

  /** Every piece the pattern cuts text into, in order. */
  pieces(text: string): string[] {
    const re = new RegExp(this.pattern.source, 'gu');
    const out: string[] = [];
    let m: RegExpExecArray | null;
    while ((m = re.exec(text)) !== null) {
      if (m[0] === '') {
        re.lastIndex++; // the patterns never match empty; guard against a loop anyway
        continue;
      }
      out.push(m[0]);
    }
    return out;
  }

  /** Token ids of text, treating any special-token spelling as ordinary text. */
  encodeOrdinary(text: string): number[] {
    const out: number[] = [];
    this.forEachPiece(text, (ids) => {
      for (const id of ids) out.push(id);
    });
    return out;
  }

  countOrdinary(text: string): number {
    let n = 0;
    this.forEachPiece(text, (ids) => {
      n += ids.length;
    });
    return n;
  }

  private forEachPiece(text: string, sink: (ids: readonly number[]) => void): void {
    const re = this.pattern;
    re.lastIndex = 0;
    let m: RegExpExecArray | null;
    while ((m = re.exec(text)) !== null) {
      const piece = m[0];
      if (piece === '') {
        re.lastIndex++;
        continue;
      }
      if (piece.length <= MEMO_PIECE_MAX_CHARS) {
        let ids = this.memo.get(piece);
        if (ids === undefined) {
          ids = this.encodePiece(piece);
          if (this.memo.size >= this.memoLimit) this.memo.clear();
          this.memo.set(piece, ids);
        }
        sink(ids);
      } else {
        sink(this.encodePiece(piece));
      }
    }
    re.lastIndex = 0;
  }

  /** Token ids of one pre-tokenized piece. */
  encodePiece(piece: string): number[] {
    const bytes = bytesKey(piece);
    const whole = this.ranks.get(bytes);
    if (whole !== undefined) return [whole];
    const bounds = bytes.length >= this.heapThreshold ? this.mergeWithHeap(bytes) : this.mergeByScan(bytes);
    const ids: number[] = [];
    for (let i = 0; i + 1 < bounds.length; i++) {
      const id = this.ranks.get(bytes.slice(bounds[i], bounds[i + 1]));
      // Every single byte has a rank in the published tables, so a merged part always has one.
      if (id === undefined) throw new Error('rank table has no entry for a byte sequence');
      ids.push(id);
    }
    return ids;
  }

  private pairRank(bytes: string, start: number, end: number): number {
    return this.ranks.get(bytes.slice(start, end)) ?? Infinity;
  }

  /** The reference's own loop: rescan for the lowest-ranked adjacent pair. Fast for short pieces. */
  private mergeByScan(bytes: string): number[] {
    const starts: number[] = [];
    for (let i = 0; i <= bytes.length; i++) starts.push(i);
    // rank[i] = rank of the pair made of part i and part i+1
    const rank: number[] = [];
    for (let i = 0; i + 2 < starts.length; i++) rank.push(this.pairRank(bytes, starts[i]!, starts[i + 2]!));
    while (rank.length > 0) {
      let best = Infinity;
      let at = -1;
      for (let i = 0; i < rank.length; i++) {
        if (rank[i]! < best) {
          best = rank[i]!;
          at = i;
        }
      }
      if (at < 0) break;
      starts.splice(at + 1, 1);
      rank.splice(at, 1);
      // After the splice rank has one entry per remaining pair; refresh the two that touch the merge.
      if (at < rank.length) rank[at] = this.pairRank(bytes, starts[at]!, starts[at + 2]!);
      if (at > 0) rank[at - 1] = this.pairRank(bytes, starts[at - 1]!, starts[at + 1]!);
    }
    return starts;
  }

  /** Same merge order (lowest rank, then leftmost) with a binary heap and a linked list of parts. */
  private mergeWithHeap(bytes: string): number[] {
    const n = bytes.length;
    const next = new Int32Array(n + 1);
    const prev = new Int32Array(n + 1);
    const alive = new Uint8Array(n + 1).fill(1);
    for (let i = 0; i <= n; i++) {
      next[i] = i + 1;
      prev[i] = i - 1;
    }
    const heap = new PairHeap();
    for (let i = 0; i + 2 <= n; i++) {
      const r = this.pairRank(bytes, i, i + 2);
      if (r !== Infinity) heap.push(r, i);
    }
    while (heap.size > 0) {
      const [r, i] = heap.pop();
      if (!alive[i] || next[i]! >= n) continue;
      const j = next[i]!;
      // Stale entry: the pair at i changed since it was pushed (equal rank means equal bytes).
      if (this.pairRank(bytes, i, next[j]!) !== r) continue;
      next[i] = next[j]!;
      prev[next[j]!] = i;
      alive[j] = 0;
      if (next[i]! < n) {
        const right = this.pairRank(bytes, i, next[next[i]!]!);
        if (right !== Infinity) heap.push(right, i);
      }
      if (i > 0) {
        const p = prev[i]!;
        const left = this.pairRank(bytes, p, next[i]!);
        if (left !== Infinity) heap.push(left, p);
      }
    }
    const starts: number[] = [];
    for (let i = 0; i < n; i = next[i]!) starts.push(i);
    starts.push(n);
    return starts;
  }
}

/** Min-heap of (rank, start) pairs ordered by rank, then start. */
class PairHeap {
  private ranks: number[] = [];
  private starts: number[] = [];

  get size(): number {
    return this.ranks.length;
  }

  private less(a: number, b: number): boolean {
    const ra = this.ranks[a]!;
    const rb = this.ranks[b]!;
    return ra < rb || (ra === rb && this.starts[a]! < this.starts[b]!);
  }

  private swap(a: number, b: number): void {
    [this.ranks[a], this.ranks[b]] = [this.ranks[b]!, this.ranks[a]!];
    [this.starts[a], this.starts[b]] = [this.starts[b]!, this.starts[a]!];
  }

  push(rank: number, start: number): void {
    this.ranks.push(rank);
    this.starts.push(start);
    let i = this.ranks.length - 1;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!this.less(i, parent)) break;
      this.swap(i, parent);
      i = parent;
    }
  }

  pop(): [number, number] {
    const top: [number, number] = [this.ranks[0]!, this.starts[0]!];
    const lastRank = this.ranks.pop()!;
    const lastStart = this.starts.pop()!;
    if (this.ranks.length > 0) {
      this.ranks[0] = lastRank;
      this.starts[0] = lastStart;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1;
        const r = l + 1;
        let m = i;
        if (l < this.ranks.length && this.less(l, m)) m = l;
        if (r < this.ranks.length && this.less(r, m)) m = r;
        if (m === i) break;
        this.swap(i, m);
        i = m;
      }
    }
    return top;
  }
}
