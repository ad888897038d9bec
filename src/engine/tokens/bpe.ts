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
   * in two generations of half as many each (when the newer is full it becomes the older).
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
    this.heapThreshold = options.heapThreshold ?? 24;
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
    const n = this.mergeCount(text.slice(start, end));
    counts.set(text, start, end, hash, n);
    return n;
  }

  /** Token ids of one piece, remembered for short pieces. */
  private idsOf(piece: string): readonly number[] {
    if (piece.length > MEMO_PIECE_MAX_CHARS) return this.encodePiece(piece);
    let ids = this.memo.get(piece);
    if (ids !== undefined) return ids;
    ids = this.olderMemo.get(piece) ?? this.encodePiece(piece);
    // Two generations of half the limit each: no more id lists than one memo of the limit held.
    if (this.memo.size >= Math.max(1, this.memoLimit >> 1)) {
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
    return bytes.length >= this.heapThreshold ? this.mergeWithHeap(bytes) : this.mergeByPairs(bytes);
  }

  /** Token ids of one pre-tokenized piece. */
  encodePiece(piece: string): number[] {
    const bytes = bytesKey(piece);
    const whole = this.ranks.get(bytes);
    if (whole !== undefined) return [whole];
    const parts = bytes.length >= this.heapThreshold ? this.mergeWithHeap(bytes) : this.mergeByPairs(bytes);
    return Array.from(this.partIds.subarray(0, parts));
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

  /**
   * Same merge order (lowest rank, then leftmost) with a binary heap and a linked list of parts,
   * over token id pairs like mergeByPairs. Leaves the ids in `partIds` and returns how many there are.
   */
  private mergeWithHeap(bytes: string): number {
    const n = bytes.length;
    const next = new Int32Array(n + 1);
    const prev = new Int32Array(n + 1);
    const idAt = new Int32Array(n);
    for (let i = 0; i <= n; i++) {
      next[i] = i + 1;
      prev[i] = i - 1;
    }
    for (let i = 0; i < n; i++) idAt[i] = this.byteIds[bytes.charCodeAt(i)]!;
    // Each entry is rank · 2^32 + start: ordered by rank, then by start (exact in a double).
    const heap = new MinHeap(3 * n + 8);
    for (let i = 0; i + 1 < n; i++) {
      const r = this.pairOf(idAt[i]!, idAt[i + 1]!);
      if (r !== NO_RANK) heap.push(r * 4294967296 + i);
    }
    while (heap.size > 0) {
      const top = heap.pop();
      const i = top % 4294967296;
      const r = (top - i) / 4294967296;
      // A part merged into its left neighbour (prev = -2), or a part now at the end.
      if (prev[i] === -2 || next[i]! >= n) continue;
      const j = next[i]!;
      // Stale entry: the pair at i changed since it was pushed (equal rank means the same token).
      if (this.pairOf(idAt[i]!, idAt[j]!) !== r) continue;
      idAt[i] = r;
      next[i] = next[j]!;
      prev[next[j]!] = i;
      prev[j] = -2;
      if (next[i]! < n) {
        const right = this.pairOf(r, idAt[next[i]!]!);
        if (right !== NO_RANK) heap.push(right * 4294967296 + i);
      }
      if (i > 0) {
        const p = prev[i]!;
        const left = this.pairOf(idAt[p]!, r);
        if (left !== NO_RANK) heap.push(left * 4294967296 + p);
      }
    }
    let m = 0;
    for (let i = 0; i < n; i = next[i]!) m++;
    if (this.partIds.length < m) {
      this.partIds = new Int32Array(m);
      this.partRanks = new Int32Array(m);
    }
    let k = 0;
    for (let i = 0; i < n; i = next[i]!) this.partIds[k++] = idAt[i]!;
    return m;
  }
}

/** Min-heap of numbers in a typed array of fixed capacity. */
class MinHeap {
  private readonly items: Float64Array;
  size = 0;

  constructor(capacity: number) {
    this.items = new Float64Array(capacity);
  }

  push(value: number): void {
    const items = this.items;
    let i = this.size++;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (items[parent]! <= value) break;
      items[i] = items[parent]!;
      i = parent;
    }
    items[i] = value;
  }

  pop(): number {
    const items = this.items;
    const top = items[0]!;
    const last = items[--this.size]!;
    const size = this.size;
    let i = 0;
    for (;;) {
      const l = 2 * i + 1;
      if (l >= size) break;
      const r = l + 1;
      const c = r < size && items[r]! < items[l]! ? r : l;
      if (items[c]! >= last) break;
      items[i] = items[c]!;
      i = c;
    }
    if (size > 0) items[i] = last;
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
 * compared in place with its chars, which the table keeps in one char pool, so a known piece costs
 * no string and the table holds no objects for the collector. When it holds `limit` pieces it is
 * emptied (the frequent pieces come back at once).
 */
class PieceCounts {
  private readonly mask: number;
  private readonly limit: number;
  /** Per slot: hash, count + 1 (0 marks an empty slot), offset in the pool, length. */
  private readonly slots: Int32Array;
  private pool = new Uint16Array(1 << 16);
  private used = 0;
  private size = 0;

  constructor(limit: number) {
    let capacity = 8;
    while (capacity < limit * 2) capacity *= 2;
    this.mask = capacity - 1;
    this.limit = limit;
    this.slots = new Int32Array(capacity * 4);
  }

  /** The count of text[start, end) or -1. */
  get(text: string, start: number, end: number, hash: number): number {
    const slots = this.slots;
    const length = end - start;
    for (let slot = hash & this.mask; ; slot = (slot + 1) & this.mask) {
      const at = slot * 4;
      const v = slots[at + 1]!;
      if (v === 0) return -1;
      if (slots[at] === hash && slots[at + 3] === length) {
        const pool = this.pool;
        let k = slots[at + 2]!;
        let i = start;
        while (i < end && pool[k] === text.charCodeAt(i)) {
          k++;
          i++;
        }
        if (i === end) return v - 1;
      }
    }
  }

  /** Remembers the count of text[start, end), which `get` has just not found. */
  set(text: string, start: number, end: number, hash: number, count: number): void {
    const length = end - start;
    if (this.size >= this.limit) {
      this.slots.fill(0);
      this.size = 0;
      this.used = 0;
    }
    if (this.used + length > this.pool.length) {
      const grown = new Uint16Array(Math.max(this.pool.length * 2, this.used + length));
      grown.set(this.pool.subarray(0, this.used));
      this.pool = grown;
    }
    const pool = this.pool;
    const offset = this.used;
    for (let i = 0; i < length; i++) pool[offset + i] = text.charCodeAt(start + i);
    this.used += length;
    let slot = hash & this.mask;
    while (this.slots[slot * 4 + 1] !== 0) slot = (slot + 1) & this.mask;
    const at = slot * 4;
    this.slots[at] = hash;
    this.slots[at + 1] = count + 1;
    this.slots[at + 2] = offset;
    this.slots[at + 3] = length;
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
