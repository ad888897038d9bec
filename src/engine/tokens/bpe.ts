// Byte-pair encoding over a published rank table: pre-tokenize with a pattern, then merge the
// bytes of each piece lowest rank first (leftmost on ties), as the reference tokenizer does.
// Counting keeps one number per distinct piece (most pieces repeat across a shard); encoding keeps
// the ids of each distinct piece.

import { PATTERNS } from './patterns.js';
import { cl100kPieceEnd, o200kPieceEnd, type PieceEnd } from './pretokenize.js';

/** A rank table as js-tiktoken ships it: pattern, special tokens, compressed base64 ranks. */
export interface RankTable {
  pat_str: string;
  special_tokens: Record<string, number>;
  bpe_ranks: string;
}

export interface EncoderOptions {
  /** Pieces at least this many bytes long merge with a heap (O(n log n)) instead of rescanning. */
  heapThreshold?: number;
  /**
   * Most distinct pieces remembered: their counts (the table is emptied when full), and their ids
   * in each of two generations (when the newer is full it becomes the older, the oldest is dropped).
   */
  memoLimit?: number;
  /**
   * How text is cut into pieces: `scanner` (default) uses the hand-written pre-tokenizer where the
   * pattern has one (cl100k_base, o200k_base; same cuts as the pattern), `pattern` always runs the regex.
   */
  pretokenizer?: 'scanner' | 'pattern';
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

/** Pre-tokenizers over char codes for the patterns that have one, by pattern text. */
const SCANNERS = new Map<string, PieceEnd>([
  [PATTERNS.cl100k_base, cl100kPieceEnd],
  [PATTERNS.o200k_base, o200kPieceEnd],
]);

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
  private readonly pieceEnd: PieceEnd | null;
  private memo = new Map<string, number[]>();
  private olderMemo = new Map<string, number[]>();
  private readonly counts: PieceCounts;
  private readonly pairs: PairRanks;
  /** Bytes of each token (one char per byte), by id. */
  private readonly tokenBytes: string[] = [];
  /** Token id of each single byte. */
  private readonly byteIds = new Int32Array(256);
  /** Work space of the pair merge: part ids and the rank of each part with its right neighbour. */
  private partIds = new Int32Array(64);
  private partRanks = new Int32Array(64);
  private readonly heapThreshold: number;
  private readonly memoLimit: number;

  constructor(ranks: Map<string, number>, patternSource: string, options: EncoderOptions = {}) {
    this.ranks = ranks;
    this.pattern = new RegExp(patternSource, 'gu');
    this.pieceEnd = options.pretokenizer === 'pattern' ? null : (SCANNERS.get(patternSource) ?? null);
    this.heapThreshold = options.heapThreshold ?? 128;
    this.memoLimit = Math.max(1, options.memoLimit ?? 200_000);
    this.counts = new PieceCounts(this.memoLimit);
    this.pairs = new PairRanks(1 << 18);
    for (const [bytes, id] of ranks) this.tokenBytes[id] = bytes;
    for (let b = 0; b < 256; b++) {
      const id = ranks.get(String.fromCharCode(b));
      // Every published table ranks each single byte; a table that does not cannot encode all text.
      if (id === undefined) throw new Error(`rank table has no entry for byte ${b}`);
      this.byteIds[b] = id;
    }
  }

  /** Every piece the pattern cuts text into, in order. */
  pieces(text: string): string[] {
    const out: string[] = [];
    const end = this.pieceEnd;
    if (end !== null) {
      for (let i = 0; i < text.length; ) {
        const e = end(text, i);
        out.push(text.slice(i, e));
        i = e;
      }
      return out;
    }
    const re = new RegExp(this.pattern.source, 'gu');
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
    const end = this.pieceEnd;
    if (end !== null) {
      for (let i = 0; i < text.length; ) {
        const e = end(text, i);
        const ids = this.idsOf(text.slice(i, e));
        for (let k = 0; k < ids.length; k++) out.push(ids[k]!);
        i = e;
      }
      return out;
    }
    for (const piece of this.patternPieces(text)) {
      const ids = this.idsOf(piece);
      for (let k = 0; k < ids.length; k++) out.push(ids[k]!);
    }
    return out;
  }

  /** Number of tokens of text, treating any special-token spelling as ordinary text. */
  countOrdinary(text: string): number {
    let n = 0;
    const end = this.pieceEnd;
    if (end !== null) {
      const length = text.length;
      for (let i = 0; i < length; ) {
        const e = end(text, i);
        // Every single byte is a token.
        if (e - i === 1 && text.charCodeAt(i) < 0x80) n++;
        else if (e - i <= MEMO_PIECE_MAX_CHARS) n += this.countIn(text, i, e);
        else n += this.mergeCount(text.slice(i, e));
        i = e;
      }
      return n;
    }
    for (const piece of this.patternPieces(text)) n += this.countOf(piece);
    return n;
  }

  private *patternPieces(text: string): Generator<string> {
    const re = this.pattern;
    re.lastIndex = 0;
    let m: RegExpExecArray | null;
    try {
      while ((m = re.exec(text)) !== null) {
        if (m[0] === '') {
          re.lastIndex++;
          continue;
        }
        yield m[0];
      }
    } finally {
      re.lastIndex = 0;
    }
  }

  /** Token count of one piece, remembered for short pieces. */
  private countOf(piece: string): number {
    if (piece.length > MEMO_PIECE_MAX_CHARS) return this.mergeCount(piece);
    return this.countIn(piece, 0, piece.length);
  }

  /** Token count of text[start, end), looked up without cutting the piece out when it is known. */
  private countIn(text: string, start: number, end: number): number {
    const counts = this.counts;
    const hash = hashOf(text, start, end);
    const known = counts.get(text, start, end, hash);
    if (known >= 0) return known;
    const piece = text.slice(start, end);
    const n = this.mergeCount(piece);
    counts.set(piece, hash, n);
    return n;
  }

  /** Token ids of one piece, remembered for short pieces. */
  private idsOf(piece: string): readonly number[] {
    if (piece.length > MEMO_PIECE_MAX_CHARS) return this.encodePiece(piece);
    let ids = this.memo.get(piece);
    if (ids !== undefined) return ids;
    ids = this.olderMemo.get(piece) ?? this.encodePiece(piece);
    if (this.memo.size >= this.memoLimit) {
      this.olderMemo = this.memo;
      this.memo = new Map();
    }
    this.memo.set(piece, ids);
    return ids;
  }

  /** Token count of one piece without building its ids. */
  private mergeCount(piece: string): number {
    const bytes = bytesKey(piece);
    if (this.ranks.has(bytes)) return 1;
    if (bytes.length >= this.heapThreshold) return this.mergeWithHeap(bytes).length - 1;
    return this.mergeByPairs(bytes);
  }

  /** Token ids of one pre-tokenized piece. */
  encodePiece(piece: string): number[] {
    const bytes = bytesKey(piece);
    const whole = this.ranks.get(bytes);
    if (whole !== undefined) return [whole];
    if (bytes.length < this.heapThreshold) {
      const parts = this.mergeByPairs(bytes);
      return Array.from(this.partIds.subarray(0, parts));
    }
    const bounds = this.mergeWithHeap(bytes);
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

  /** Rank of the token spelled by token a then token b, or NO_RANK; remembered by the id pair. */
  private pairOf(a: number, b: number): number {
    const pairs = this.pairs;
    const known = pairs.get(a, b);
    if (known !== UNKNOWN) return known;
    const r = this.ranks.get(this.tokenBytes[a]! + this.tokenBytes[b]!) ?? NO_RANK;
    pairs.set(a, b, r);
    return r;
  }

  /**
   * The reference's own loop over token ids: rescan for the lowest-ranked adjacent pair (leftmost
   * on ties) and merge it. Parts are always tokens, so the rank of two adjacent parts is the rank
   * of their id pair. Leaves the ids in `partIds` and returns how many there are.
   */
  private mergeByPairs(bytes: string): number {
    let m = bytes.length;
    if (this.partIds.length < m) {
      this.partIds = new Int32Array(m * 2);
      this.partRanks = new Int32Array(m * 2);
    }
    const ids = this.partIds;
    const rank = this.partRanks;
    for (let i = 0; i < m; i++) ids[i] = this.byteIds[bytes.charCodeAt(i)]!;
    for (let i = 0; i + 1 < m; i++) rank[i] = this.pairOf(ids[i]!, ids[i + 1]!);
    while (m > 1) {
      let best = NO_RANK;
      let at = -1;
      for (let i = 0; i + 1 < m; i++) {
        if (rank[i]! < best) {
          best = rank[i]!;
          at = i;
        }
      }
      if (at < 0) break;
      ids[at] = best;
      // Pieces are short here: a loop beats copyWithin's call.
      for (let i = at + 1; i + 1 < m; i++) ids[i] = ids[i + 1]!;
      for (let i = at; i + 2 < m; i++) rank[i] = rank[i + 1]!;
      m--;
      if (at + 1 < m) rank[at] = this.pairOf(best, ids[at + 1]!);
      if (at > 0) rank[at - 1] = this.pairOf(ids[at - 1]!, best);
    }
    return m;
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

/** Rank of a pair that does not spell a token: above every real rank. */
const NO_RANK = 0x7fffffff;
/** What PairRanks returns for a pair it does not know. */
const UNKNOWN = -1;

/** FNV-1a over the UTF-16 units of text[start, end) (common practice), as a 32-bit integer. */
function hashOf(text: string, start: number, end: number): number {
  let h = 0x811c9dc5;
  for (let i = start; i < end; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193);
  return h ^ (h >>> 15);
}

/**
 * Token counts of short pieces in an open-addressing table: a piece is found by its hash and
 * compared in place in the text it came from, so a known piece costs no string. When the table
 * holds `limit` pieces it is emptied (the frequent pieces come back at once).
 */
class PieceCounts {
  private readonly mask: number;
  private readonly limit: number;
  private readonly hashes: Int32Array;
  /** count + 1 per slot; 0 marks an empty slot. */
  private readonly values: Int32Array;
  private readonly keys: (string | undefined)[];
  private size = 0;

  constructor(limit: number) {
    let capacity = 8;
    while (capacity < limit * 2) capacity *= 2;
    this.mask = capacity - 1;
    this.limit = limit;
    this.hashes = new Int32Array(capacity);
    this.values = new Int32Array(capacity);
    this.keys = new Array<string | undefined>(capacity).fill(undefined);
  }

  /** The count of text[start, end) or -1. */
  get(text: string, start: number, end: number, hash: number): number {
    const length = end - start;
    for (let slot = hash & this.mask; ; slot = (slot + 1) & this.mask) {
      const v = this.values[slot]!;
      if (v === 0) return -1;
      if (this.hashes[slot] === hash) {
        const key = this.keys[slot]!;
        if (key.length === length && text.startsWith(key, start)) return v - 1;
      }
    }
  }

  set(piece: string, hash: number, count: number): void {
    if (this.size >= this.limit) {
      this.values.fill(0);
      this.keys.fill(undefined);
      this.size = 0;
    }
    let slot = hash & this.mask;
    while (this.values[slot] !== 0) slot = (slot + 1) & this.mask;
    this.hashes[slot] = hash;
    this.values[slot] = count + 1;
    this.keys[slot] = piece;
    this.size++;
  }
}

/** Ranks of token id pairs met so far (NO_RANK for a pair that spells no token), emptied when full. */
class PairRanks {
  private readonly mask: number;
  private readonly limit: number;
  /** left id + 1 per slot; 0 marks an empty slot. */
  private readonly lefts: Int32Array;
  private readonly rights: Int32Array;
  private readonly ranks: Int32Array;
  private size = 0;

  constructor(limit: number) {
    let capacity = 8;
    while (capacity < limit * 2) capacity *= 2;
    this.mask = capacity - 1;
    this.limit = limit;
    this.lefts = new Int32Array(capacity);
    this.rights = new Int32Array(capacity);
    this.ranks = new Int32Array(capacity);
  }

  private static slotOf(a: number, b: number): number {
    const h = Math.imul(a, 0x9e3779b1) ^ Math.imul(b, 0x85ebca77);
    return h ^ (h >>> 16);
  }

  get(a: number, b: number): number {
    const left = a + 1;
    for (let slot = PairRanks.slotOf(a, b) & this.mask; ; slot = (slot + 1) & this.mask) {
      const l = this.lefts[slot]!;
      if (l === 0) return UNKNOWN;
      if (l === left && this.rights[slot] === b) return this.ranks[slot]!;
    }
  }

  set(a: number, b: number, rank: number): void {
    if (this.size >= this.limit) {
      this.lefts.fill(0);
      this.size = 0;
    }
    let slot = PairRanks.slotOf(a, b) & this.mask;
    while (this.lefts[slot] !== 0) slot = (slot + 1) & this.mask;
    this.lefts[slot] = a + 1;
    this.rights[slot] = b;
    this.ranks[slot] = rank;
    this.size++;
  }
}
