// The line index of a text shard: sparse and lazy. It keeps one start offset every BLOCK_LINES
// lines (a read scans within a block), the blank lines and the very long lines as sorted exception
// lists, and the lines learnt not to hold JSON. Finding line ends needs no decoding and no parse:
// `LineFinder` runs `Buffer.indexOf` over the bytes and looks at a line's first bytes only;
// `indexFileRange` feeds it a plain file. Lines are classified lazily: a line that is not JSON is
// learnt when a page, a scan or the analysis parses it. `walkLines` reads lines back through the
// index.

import { readSync } from 'node:fs';
import { CancelledError } from '../errors.js';

/** One start offset is kept every this many lines. */
export const BLOCK_LINES = 32;
/** Lines longer than this are kept in the index with their start and length, and read on their own. */
export const LONG_LINE_BYTES = 1024 * 1024;
/** The index reads the file through a reused buffer of this size (measured faster than larger ones). */
const INDEX_CHUNK_BYTES = 1024 * 1024;
/** The index gives the event loop a turn (progress, cancelling, page reads) every this many bytes. */
const INDEX_YIELD_BYTES = 16 * 1024 * 1024;
/** A walk groups neighbouring lines into one positional read up to this size. */
const READ_SEGMENT_BYTES = 8 * 1024 * 1024;

/** A growable list of numbers (offsets past 4 GiB need doubles), usually sorted ascending. */
export class NumberList {
  private a = new Float64Array(64);
  length = 0;

  push(x: number): void {
    if (this.length === this.a.length) {
      const b = new Float64Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.length++] = x;
  }

  get(i: number): number {
    return this.a[i];
  }

  /** How many values are below x (the list is sorted). */
  countBelow(x: number): number {
    let lo = 0;
    let hi = this.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.a[mid] < x) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  has(x: number): boolean {
    const i = this.countBelow(x);
    return i < this.length && this.a[i] === x;
  }

  /** Inserts x in order; false when it was there already. */
  insert(x: number): boolean {
    const i = this.countBelow(x);
    if (i < this.length && this.a[i] === x) return false;
    this.push(x);
    this.a.copyWithin(i + 1, i, this.length - 1);
    this.a[i] = x;
    return true;
  }

  clear(): void {
    this.length = 0;
  }

  /** The last value, or undefined when the list is empty. */
  last(): number | undefined {
    return this.length > 0 ? this.a[this.length - 1] : undefined;
  }

  pop(): void {
    if (this.length > 0) this.length--;
  }

  toArray(): number[] {
    return Array.from(this.a.subarray(0, this.length));
  }

  /** Replaces the contents; false unless `xs` is a sorted list of finite non-negative numbers. */
  fill(xs: unknown, sorted = true): boolean {
    if (!Array.isArray(xs)) return false;
    this.clear();
    let prev = -1;
    for (const x of xs) {
      if (typeof x !== 'number' || !Number.isFinite(x) || x < 0 || (sorted && x <= prev)) return false;
      this.push(x);
      prev = x;
    }
    return true;
  }

  /** Bytes held (for the benchmark and tests of the index's size). */
  get bytes(): number {
    return this.a.byteLength;
  }
}

export type IndexedKind = 'line' | 'blank' | 'too-long' | 'invalid';

/** A line index as plain JSON (see `LineIndex.snapshot`). */
export interface LineIndexSnapshot {
  lines: number;
  end: number;
  lastUnterminated: boolean;
  exactThrough: number;
  blockStarts: number[];
  blanks: number[];
  tooLong: number[];
  longEntries: number[];
  longStarts: number[];
  longLengths: number[];
  invalid: number[];
}

export class LineIndex {
  private readonly blockStarts = new NumberList();
  /** Lines indexed; published after the line's facts, so a concurrent read never sees half a line. */
  lines = 0;
  /** Byte offset just past the last indexed line (its `\n` included). */
  end = 0;
  /** The last indexed line has no `\n` (the file's final line). */
  lastUnterminated = false;
  readonly blanks = new NumberList();
  readonly tooLong = new NumberList();
  /** Lines over the long-line size: entry, start and length, read on their own. */
  readonly longEntries = new NumberList();
  readonly longStarts = new NumberList();
  readonly longLengths = new NumberList();
  /** Lines learnt (from a page, a scan or the analysis) to hold no JSON value. */
  readonly invalid = new NumberList();
  /** Every line below this has been classified, so record numbers below it are exact. */
  exactThrough = 0;

  constructor(
    readonly maxLineBytes: number,
    readonly longLineBytes: number,
  ) {}

  reset(): void {
    this.blockStarts.clear();
    this.blanks.clear();
    this.tooLong.clear();
    this.longEntries.clear();
    this.longStarts.clear();
    this.longLengths.clear();
    this.invalid.clear();
    this.exactThrough = 0;
    this.lines = 0;
    this.end = 0;
    this.lastUnterminated = false;
  }

  add(start: number, length: number, blank: boolean, terminated: boolean): void {
    const i = this.lines;
    if (i % BLOCK_LINES === 0) this.blockStarts.push(start);
    if (length > this.maxLineBytes) this.tooLong.push(i);
    else if (blank) this.blanks.push(i);
    if (length > this.longLineBytes) {
      this.longEntries.push(i);
      this.longStarts.push(start);
      this.longLengths.push(length);
    }
    this.end = start + length + (terminated ? 1 : 0);
    this.lastUnterminated = !terminated;
    this.lines = i + 1;
  }

  /**
   * Forgets the last line, an unterminated one starting at byte `start`, so that indexing can go on
   * from `start` when the file has grown (the line may be longer now, or ended by a `\n`).
   */
  dropLast(start: number): void {
    const i = this.lines - 1;
    if (i < 0 || !this.lastUnterminated) return;
    // Published first, so a concurrent read never sees the line half forgotten.
    this.lines = i;
    if (i % BLOCK_LINES === 0) this.blockStarts.pop();
    for (const l of [this.blanks, this.tooLong, this.invalid]) if (l.last() === i) l.pop();
    if (this.longEntries.last() === i) {
      this.longEntries.pop();
      this.longStarts.pop();
      this.longLengths.pop();
    }
    this.exactThrough = Math.min(this.exactThrough, i);
    this.end = start;
    this.lastUnterminated = false;
  }

  /** Records among the lines before `line`, as far as what is known (exact below `exactThrough`). */
  recordsBefore(line: number): number {
    return line - this.blanks.countBelow(line) - this.tooLong.countBelow(line) - this.invalid.countBelow(line);
  }

  get records(): number {
    return this.recordsBefore(this.lines);
  }

  kindOf(line: number): IndexedKind {
    if (this.tooLong.has(line)) return 'too-long';
    if (this.blanks.has(line)) return 'blank';
    if (this.invalid.has(line)) return 'invalid';
    return 'line';
  }

  /** Notes that a line holds no JSON value (a blank or over-long line is known already). */
  learnInvalid(line: number): void {
    if (line >= this.lines || this.blanks.has(line) || this.tooLong.has(line)) return;
    this.invalid.insert(line);
  }

  /** The first line of the block holding `line`, and its byte offset. */
  blockOf(line: number): { line: number; offset: number } {
    const b = Math.floor(line / BLOCK_LINES);
    return { line: b * BLOCK_LINES, offset: this.blockStarts.get(b) };
  }

  /** Position in the long-line lists of the first long line at or after `line`. */
  longFrom(line: number): number {
    return this.longEntries.countBelow(line);
  }

  /** The whole index as plain JSON, for keeping between sessions. */
  snapshot(): LineIndexSnapshot {
    return {
      lines: this.lines,
      end: this.end,
      lastUnterminated: this.lastUnterminated,
      exactThrough: this.exactThrough,
      blockStarts: this.blockStarts.toArray(),
      blanks: this.blanks.toArray(),
      tooLong: this.tooLong.toArray(),
      longEntries: this.longEntries.toArray(),
      longStarts: this.longStarts.toArray(),
      longLengths: this.longLengths.toArray(),
      invalid: this.invalid.toArray(),
    };
  }

  /** Takes a kept snapshot; false (and the index empty) when it is not a consistent one. */
  restore(s: LineIndexSnapshot): boolean {
    const ok =
      Number.isInteger(s?.lines) && s.lines >= 0 && Number.isFinite(s.end) && s.end >= 0 && typeof s.lastUnterminated === 'boolean' &&
      Number.isInteger(s.exactThrough) && s.exactThrough >= 0 && s.exactThrough <= s.lines &&
      this.blockStarts.fill(s.blockStarts) && this.blockStarts.length === Math.ceil(s.lines / BLOCK_LINES) &&
      this.blanks.fill(s.blanks) && this.tooLong.fill(s.tooLong) && this.invalid.fill(s.invalid) &&
      this.longEntries.fill(s.longEntries) && this.longStarts.fill(s.longStarts) && this.longLengths.fill(s.longLengths, false) &&
      this.longStarts.length === this.longEntries.length && this.longLengths.length === this.longEntries.length &&
      [this.blanks, this.tooLong, this.invalid, this.longEntries].every((l) => l.length === 0 || l.get(l.length - 1) < s.lines) &&
      (this.blockStarts.length === 0 || this.blockStarts.get(this.blockStarts.length - 1) < Math.max(1, s.end));
    if (!ok) {
      this.reset();
      return false;
    }
    this.lines = s.lines;
    this.end = s.end;
    this.lastUnterminated = s.lastUnterminated;
    this.exactThrough = s.exactThrough;
    return true;
  }

  /** Bytes the index holds. */
  get bytes(): number {
    return [this.blockStarts, this.blanks, this.tooLong, this.longEntries, this.longStarts, this.longLengths, this.invalid].reduce((n, l) => n + l.bytes, 0);
  }

  /** Byte offset where the final (unterminated) line starts, found from its block with `io`. */
  async lastLineStart(io: LineReader): Promise<number> {
    const last = this.lines - 1;
    if (this.longEntries.last() === last) return this.longStarts.last()!;
    // A line not kept as long is at most the long-line size: its start is within that many bytes.
    const block = this.blockOf(last).offset;
    const from = Math.max(block, this.end - this.longLineBytes - 1);
    const bytes = Buffer.from(await io.readAt(from, this.end - from));
    const nl = bytes.lastIndexOf(10);
    if (nl >= 0) return from + nl + 1;
    if (from === block) return block;
    throw io.changed();
  }
}

/** How the index reads the (decompressed) file's bytes back. */
export interface LineReader {
  /** `length` bytes at `offset`, fewer where the file ends first. */
  readAt(offset: number, length: number): Promise<Uint8Array>;
  /** Exactly `length` bytes at `offset`; throws `changed()` where the file ends first. */
  readExact(offset: number, length: number): Promise<Uint8Array>;
  /** The error for a file that no longer matches its index (changed while open). */
  changed(): Error;
}

/**
 * Feeds bytes [from, to) of a plain file to `finder`: synchronous reads into one reused buffer (the
 * fastest plain way to find line ends), and every INDEX_YIELD_BYTES a `pause` (by default a turn of
 * the event loop, so that cancelling and page reads get through; it may throw to stop). Returns
 * where the reads stopped: `to`, or before it where the file ended first.
 */
export async function indexFileRange(fd: number, finder: LineFinder, from: number, to: number, pause: (done: number) => Promise<void> = nextTurn): Promise<number> {
  const buf = new Uint8Array(INDEX_CHUNK_BYTES);
  let done = from;
  let sinceYield = 0;
  while (done < to) {
    const n = readSync(fd, buf, 0, Math.min(buf.length, to - done), done);
    if (n === 0) break;
    finder.push(buf.subarray(0, n));
    done += n;
    if ((sinceYield += n) >= INDEX_YIELD_BYTES) {
      sinceYield = 0;
      await pause(done);
    }
  }
  return done;
}

/** A turn of the event loop. */
export function nextTurn(): Promise<void> {
  return new Promise<void>((resolve) => setImmediate(resolve));
}

/**
 * Reads lines [start, end) through the index and hands each to `take` in order: its number, start,
 * bytes (null for a line over the index's line limit, which is never read) and length. Reads start
 * at the block holding `start` (at most BLOCK_LINES - 1 lines are read for nothing); neighbouring
 * lines come in one positional read sized from the average line, a very long line on its own.
 */
export async function walkLines(
  idx: LineIndex,
  start: number,
  end: number,
  io: LineReader,
  take: (line: number, at: number, bytes: Uint8Array | null, length: number) => void,
  signal?: AbortSignal,
): Promise<void> {
  const block = idx.blockOf(start);
  let line = block.line;
  let pos = block.offset;
  let long = idx.longFrom(line);
  const average = idx.end / Math.max(1, idx.lines);
  let least = 64 * 1024;
  while (line < end) {
    if (signal?.aborted) throw new CancelledError('reading was cancelled');
    const nextLong = long < idx.longEntries.length ? idx.longEntries.get(long) : Number.POSITIVE_INFINITY;
    if (line === nextLong) {
      // A very long line is read on its own (or, over the limit, not at all).
      const at = idx.longStarts.get(long);
      const length = idx.longLengths.get(long);
      if (line >= start) take(line, at, length > idx.maxLineBytes ? null : await io.readExact(at, length), length);
      pos = at + length + (line === idx.lines - 1 && idx.lastUnterminated ? 0 : 1);
      line++;
      long++;
      continue;
    }
    // One positional read for a run of neighbouring lines, sized from the average line.
    const stopAt = nextLong === Number.POSITIVE_INFINITY ? idx.end : idx.longStarts.get(long);
    const want = Math.max(least, Math.ceil((Math.min(end, nextLong) - line) * average * 1.25) + 4096);
    const segEnd = Math.min(stopAt, pos + Math.min(READ_SEGMENT_BYTES, want));
    const buf = Buffer.from(await io.readExact(pos, segEnd - pos));
    let i = 0;
    while (line < end && line < nextLong) {
      const nl = buf.indexOf(10, i);
      if (nl < 0) {
        // The file's final line has no `\n`.
        if (segEnd === idx.end && line === idx.lines - 1 && idx.lastUnterminated && i < buf.length) {
          if (line >= start) take(line, pos + i, buf.subarray(i), buf.length - i);
          line++;
          i = buf.length;
        }
        break;
      }
      if (line >= start) take(line, pos + i, buf.subarray(i, nl), nl - i);
      line++;
      i = nl + 1;
    }
    if (i === 0 && line < end) {
      // A line longer than the estimate: read again with room for any line under the long-line size.
      if (segEnd < stopAt && least < READ_SEGMENT_BYTES) {
        least = READ_SEGMENT_BYTES;
        continue;
      }
      throw io.changed();
    }
    least = 64 * 1024;
    pos += i;
  }
}

const BOM = [0xef, 0xbb, 0xbf];

/**
 * Finds line ends in a byte stream and tells the index each line's start, length and whether it is
 * blank (white space only after an optional byte order mark) — without decoding or keeping bytes.
 */
export class LineFinder {
  private lineStart: number;
  private length = 0;
  private nonBlank = false;
  private bom = 0;
  private pastBom = false;

  constructor(
    private readonly index: LineIndex,
    startOffset = 0,
  ) {
    this.lineStart = startOffset;
  }

  private look(buf: Uint8Array, from: number, to: number): void {
    for (let k = from; k < to; k++) {
      const b = buf[k];
      if (!this.pastBom) {
        if (b === BOM[this.bom]) {
          if (++this.bom === 3) this.pastBom = true;
          continue;
        }
        // Part of a byte order mark and then something else is not white space.
        if (this.bom > 0) {
          this.nonBlank = true;
          return;
        }
        this.pastBom = true;
      }
      if (b !== 0x20 && b !== 0x09 && b !== 0x0d) {
        this.nonBlank = true;
        return;
      }
    }
  }

  /** The line seen so far is white space (a byte order mark cut short is not). */
  private blank(): boolean {
    return !this.nonBlank && (this.pastBom || this.bom === 0);
  }

  push(chunk: Uint8Array): void {
    // Buffer's indexOf is several times faster than Uint8Array's on the same memory.
    const buf = Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    const len = buf.length;
    let i = 0;
    while (i < len) {
      const nl = buf.indexOf(10, i);
      const stop = nl < 0 ? len : nl;
      if (!this.nonBlank) this.look(buf, i, stop);
      if (nl < 0) {
        this.length += len - i;
        return;
      }
      this.length += nl - i;
      this.index.add(this.lineStart, this.length, this.blank(), true);
      this.lineStart += this.length + 1;
      this.length = 0;
      this.nonBlank = false;
      this.bom = 0;
      this.pastBom = false;
      i = nl + 1;
    }
  }

  /** Adds a final line without a `\n` (none when the stream ended with `\n`). */
  end(): void {
    if (this.length > 0) this.index.add(this.lineStart, this.length, this.blank(), false);
    this.lineStart += this.length;
    this.length = 0;
    this.nonBlank = false;
    this.bom = 0;
    this.pastBom = false;
  }
}
