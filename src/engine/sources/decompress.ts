// Decompressed chunks of a gzip or zstd shard, read as far as the data goes: gzip members are
// parsed here (RFC 1952) so a bad CRC or length in a trailer still keeps every byte that inflated,
// as `gzip -dc` does; zstd frames are walked here (RFC 8878 §3.1.1) so each frame's content
// checksum (XXH64, low 32 bits) is verified, which fzstd skips. Both stop at a cap on the ratio of
// inflated to compressed bytes, so a bomb cannot fill memory or disk. Which compression a file has
// is decided here from its first bytes, for any text source.

import { open } from 'node:fs/promises';
import { constants as zlib, createInflateRaw, crc32, gunzipSync } from 'node:zlib';
import { Decompress } from 'fzstd';
import { Xxh64 } from '../text/xxh64.js';

/** How a text shard's bytes are wrapped. */
export type Compression = 'none' | 'gzip' | 'zstd';

/** The compressions, keyed by what their bytes start with (RFC 1952: 1f 8b; RFC 8878: 28 b5 2f fd) and, as a hint only, by name. */
const CODECS: readonly { compression: Exclude<Compression, 'none'>; magic: readonly number[]; endings: readonly string[] }[] = [
  { compression: 'gzip', magic: [0x1f, 0x8b], endings: ['.gz'] },
  { compression: 'zstd', magic: [0x28, 0xb5, 0x2f, 0xfd], endings: ['.zst'] },
];

/** What a file's name suggests; only a hint, the bytes decide (`compressionOfBytes`). */
export function compressionOf(path: string): Compression {
  const lower = path.toLowerCase();
  return CODECS.find((c) => c.endings.some((e) => lower.endsWith(e)))?.compression ?? 'none';
}

/** The compression the first bytes of a file show, or null for bytes no compression starts with. */
export function compressionOfBytes(head: Uint8Array): Exclude<Compression, 'none'> | null {
  return CODECS.find((c) => c.magic.every((b, k) => head[k] === b))?.compression ?? null;
}

/**
 * The first `want` bytes of decompressed data from the start of a compressed file, read through
 * `read(offset, length)`; a corrupt or cut-short stream gives what decoded before the damage.
 * Input grows in steps (up to `maxInput` bytes) so no step can expand past a few MiB.
 */
export function decompressHead(
  read: (offset: number, length: number) => Uint8Array,
  size: number,
  compression: Exclude<Compression, 'none'>,
  want: number,
  maxInput: number,
): { data: Uint8Array; whole: boolean } {
  let out: Uint8Array = new Uint8Array(0);
  for (let input = 1024; ; input *= 4) {
    const chunk = read(0, input);
    const all = chunk.length >= size;
    let got: Uint8Array | null = null;
    try {
      got = compression === 'gzip' ? gunzipSync(chunk, { finishFlush: zlib.Z_SYNC_FLUSH, maxOutputLength: 16 * want }) : unzstdHead(chunk, 16 * want);
    } catch {
      // Corrupt past this point (or more than the cap): keep the previous step's output.
    }
    if (got) out = got;
    if (!got || out.length >= want || all || input >= maxInput) return { data: out.subarray(0, want), whole: all && got !== null && out.length <= want };
  }
}

function unzstdHead(input: Uint8Array, cap: number): Uint8Array {
  const parts: Uint8Array[] = [];
  let n = 0;
  const d = new Decompress((data) => {
    parts.push(data.slice());
    n += data.length;
  });
  // Small pushes, each checked: one push of RLE blocks could otherwise expand to gigabytes.
  for (let o = 0; o < input.length && n < cap; o += 2048) d.push(input.subarray(o, Math.min(input.length, o + 2048)));
  return Buffer.concat(parts);
}

/** A decompressed size beyond this many times the compressed bytes read so far is refused. */
export const DEFAULT_MAX_INFLATE_RATIO = 200;
/** Below this much output the ratio is not checked: small files of blank lines compress far better. */
const RATIO_FREE_BYTES = 64 * 1024 * 1024;
const INPUT_BYTES = 64 * 1024;
/** At most 2 KiB of zstd input per push: 512 RLE blocks, 64 MiB of output at the very worst. */
const ZSTD_PUSH_BYTES = 2 * 1024;
/** gzip input per write: on damage inside a deflate stream only this piece's output is lost. */
const GZIP_WRITE_BYTES = 16 * 1024;

export type DecompressProblem = 'corrupt' | 'limit';

/** A compressed stream that stops early; `message` is a whole sentence for a finding. */
export class DecompressError extends Error {
  constructor(
    message: string,
    readonly problem: DecompressProblem,
  ) {
    super(message);
    this.name = 'DecompressError';
  }
}

export interface DecompressOptions {
  /** Compressed bytes consumed, as they are read. */
  onInput?: (n: number) => void;
  maxInflateRatio?: number;
}

/** Chunks of the decompressed stream. Throws DecompressError after yielding all that decoded. */
export async function* decompress(path: string, compression: Exclude<Compression, 'none'>, opts: DecompressOptions = {}): AsyncGenerator<Uint8Array> {
  const ratio = opts.maxInflateRatio ?? DEFAULT_MAX_INFLATE_RATIO;
  let input = 0;
  let output = 0;
  const onInput = (n: number) => {
    input += n;
    opts.onInput?.(n);
  };
  const inner = compression === 'gzip' ? gunzip(path, onInput) : unzstd(path, onInput);
  for await (const chunk of inner) {
    output += chunk.length;
    if (output > RATIO_FREE_BYTES && output > ratio * input) {
      await inner.return(undefined);
      throw new DecompressError(
        `the ${compression} stream inflates to more than ${ratio} times its compressed size (${output} bytes from ${input}); reading stopped there as a likely decompression bomb`,
        'limit',
      );
    }
    yield chunk;
  }
}

/** Positional reads of a file in pieces, with a look-back-free cursor. */
class FileCursor {
  private constructor(
    private readonly fh: Awaited<ReturnType<typeof open>>,
    readonly size: number,
  ) {}
  static async open(path: string): Promise<FileCursor> {
    const fh = await open(path, 'r');
    return new FileCursor(fh, (await fh.stat()).size);
  }
  async read(at: number, length: number): Promise<Uint8Array> {
    const buf = new Uint8Array(Math.max(0, Math.min(length, this.size - at)));
    let got = 0;
    while (got < buf.length) {
      const { bytesRead } = await this.fh.read(buf, got, buf.length - got, at + got);
      if (bytesRead === 0) break;
      got += bytesRead;
    }
    return got === buf.length ? buf : buf.subarray(0, got);
  }
  close(): Promise<void> {
    return this.fh.close();
  }
}

/** Length of the gzip member header at the start of `b` (RFC 1952 §2.3), or null when `b` is too short. */
function gzipHeaderLength(b: Uint8Array, at: number): number | null {
  if (b.length < 10) return null;
  if (b[2] !== 8) throw new DecompressError(`the gzip member at byte ${at} uses compression method ${b[2]}, not deflate`, 'corrupt');
  const flg = b[3];
  if (flg & 0xe0) throw new DecompressError(`the gzip member at byte ${at} sets reserved header flags`, 'corrupt');
  let p = 10;
  if (flg & 4) {
    if (b.length < p + 2) return null;
    p += 2 + (b[p] | (b[p + 1] << 8));
  }
  for (const bit of [8, 16]) {
    if (flg & bit) {
      while (p < b.length && b[p] !== 0) p++;
      if (p >= b.length) return null;
      p++;
    }
  }
  if (flg & 2) p += 2;
  return p <= b.length ? p : null;
}

async function* gunzip(path: string, onInput: (n: number) => void): AsyncGenerator<Uint8Array> {
  const file = await FileCursor.open(path);
  try {
    let at = 0;
    let members = 0;
    let total = 0;
    while (at < file.size) {
      const head = await file.read(at, Math.min(INPUT_BYTES, file.size - at));
      if (members > 0 && !(head[0] === 0x1f && head[1] === 0x8b)) {
        // `gzip -dc` ignores trailing zeros and warns of other trailing bytes; so do we (as a finding).
        const rest = await file.read(at, Math.min(file.size - at, 1 << 20));
        if (rest.every((x) => x === 0) && file.size - at <= 1 << 20) {
          onInput(file.size - at);
          return;
        }
        throw new DecompressError(`the ${file.size - at} bytes after gzip member ${members} (from byte ${at}) are not gzip data; all ${total} decompressed bytes before them were read`, 'corrupt');
      }
      if (!(head[0] === 0x1f && head[1] === 0x8b)) throw new DecompressError('the file does not start with a gzip header', 'corrupt');
      let hl = gzipHeaderLength(head, at);
      if (hl === null) {
        const bigger = await file.read(at, Math.min(file.size - at, 1 << 20));
        hl = gzipHeaderLength(bigger, at);
        if (hl === null) throw new DecompressError(`the gzip member header at byte ${at} is cut short`, 'corrupt');
      }
      onInput(hl);
      const member = inflateMember(file, at + hl, onInput);
      let crc = 0;
      let length = 0;
      let end: { consumed: number } | null = null;
      for (;;) {
        const step = await member.next();
        if (step.done) {
          end = step.value;
          break;
        }
        crc = crc32(step.value, crc);
        length += step.value.length;
        total += step.value.length;
        yield step.value;
      }
      const trailerAt = at + hl + end.consumed;
      const trailer = await file.read(trailerAt, 8);
      onInput(trailer.length);
      members++;
      if (trailer.length < 8) {
        throw new DecompressError(`gzip member ${members} ends without its 8-byte trailer (the file is cut short at byte ${file.size}); all ${total} decompressed bytes were read`, 'corrupt');
      }
      const dv = new DataView(trailer.buffer, trailer.byteOffset, 8);
      const wantCrc = dv.getUint32(0, true);
      const wantLen = dv.getUint32(4, true);
      if (wantCrc !== crc >>> 0) {
        throw new DecompressError(
          `gzip member ${members}'s CRC-32 does not match its data (trailer at byte ${trailerAt} says ${hex8(wantCrc)}, the data gives ${hex8(crc >>> 0)}); all ${total} decompressed bytes were kept`,
          'corrupt',
        );
      }
      if (wantLen !== length % 2 ** 32) {
        throw new DecompressError(`gzip member ${members}'s length in its trailer (${wantLen}) does not match its ${length} decompressed bytes; all of them were kept`, 'corrupt');
      }
      at = trailerAt + 8;
    }
  } finally {
    await file.close();
  }
}

function hex8(n: number): string {
  return n.toString(16).padStart(8, '0');
}

/**
 * Inflates one raw deflate stream starting at `start`; returns how many compressed bytes it took,
 * so the trailer can be read after it. Output decoded before damage is yielded before the error.
 */
async function* inflateMember(file: FileCursor, start: number, onInput: (n: number) => void): AsyncGenerator<Uint8Array, { consumed: number }> {
  const inf = createInflateRaw({ chunkSize: 256 * 1024 });
  const queue: Buffer[] = [];
  let ended = false;
  let failure: Error | null = null;
  let wake: (() => void) | null = null;
  const notify = () => {
    const w = wake;
    wake = null;
    w?.();
  };
  inf.on('data', (c: Buffer) => {
    queue.push(c);
    notify();
  });
  inf.on('end', () => {
    ended = true;
    notify();
  });
  inf.on('error', (e) => {
    failure = e;
    ended = true;
    notify();
  });
  let pos = start;
  let fed = 0;
  let closedInput = false;
  let writing = false;
  try {
    for (;;) {
      while (queue.length) yield queue.shift()!;
      if (ended) break;
      // Feed one piece at a time, each taken in before the next: bounded memory whatever the ratio.
      if (!closedInput && !writing) {
        if (pos >= file.size) {
          closedInput = true;
          inf.end();
        } else {
          const piece = await file.read(pos, GZIP_WRITE_BYTES);
          pos += piece.length;
          fed += piece.length;
          writing = true;
          inf.write(piece, () => {
            writing = false;
            notify();
          });
        }
        continue;
      }
      await new Promise<void>((r) => {
        wake = r;
        if (queue.length || ended || (!writing && !closedInput)) notify();
      });
    }
    while (queue.length) yield queue.shift()!;
    const consumed = inf.bytesWritten;
    // Count input up to the stream's end; the rest is the trailer and what follows.
    onInput(Math.min(consumed, fed));
    if (failure) {
      const why = (failure as Error).message.replace(/\.$/, '');
      throw new DecompressError(`the gzip data is corrupt or cut short at about byte ${start + consumed} (${why}); everything before it was read`, 'corrupt');
    }
    return { consumed };
  } finally {
    inf.removeAllListeners('data');
    inf.destroy();
  }
}

// ---- zstd ----

type Walk = 'magic' | 'header' | 'blockHeader' | 'blockBody' | 'checksum' | 'skipSize' | 'skipBody';

/** Follows the frame structure of a zstd stream byte by byte, without decoding blocks. */
class ZstdWalker {
  state: Walk = 'magic';
  private need = 4;
  private acc: number[] = [];
  private blockLast = false;
  private hasChecksum = false;
  frames = 0;
  /** Set once a frame's checksum has been read: the expected value. */
  checksum: number | null = null;

  /** Bytes of `b` from `o` that belong to the current step; `frameEnd` when they complete a frame. */
  step(b: Uint8Array, o: number): { take: number; frameEnd: boolean } {
    const take = Math.min(this.need, b.length - o);
    if (this.state === 'blockBody' || this.state === 'skipBody') {
      this.need -= take;
      if (this.need === 0) this.afterBody();
      return { take, frameEnd: this.frameJustEnded() };
    }
    for (let k = 0; k < take; k++) this.acc.push(b[o + k]);
    this.need -= take;
    if (this.need > 0) return { take, frameEnd: false };
    const bytes = this.acc;
    this.acc = [];
    switch (this.state) {
      case 'magic': {
        const m = (bytes[0] | (bytes[1] << 8) | (bytes[2] << 16) | (bytes[3] << 24)) >>> 0;
        if (m === 0xfd2fb528) {
          this.state = 'header';
          this.need = 1;
        } else if ((m & 0xfffffff0) === 0x184d2a50) {
          this.state = 'skipSize';
          this.need = 4;
        } else throw new DecompressError(`bytes at the start of zstd frame ${this.frames + 1} are not a zstd frame (magic ${hex8(m)})`, 'corrupt');
        return { take, frameEnd: false };
      }
      case 'header': {
        if (bytes.length === 1) {
          const d = bytes[0];
          const fcf = d >> 6;
          const single = (d >> 5) & 1;
          this.hasChecksum = ((d >> 2) & 1) === 1;
          const did = [0, 1, 2, 4][d & 3];
          const fcs = fcf === 0 ? single : [0, 2, 4, 8][fcf];
          const rest = (single ? 0 : 1) + did + fcs;
          if (rest === 0) {
            this.state = 'blockHeader';
            this.need = 3;
          } else {
            this.acc = [d];
            this.need = rest;
          }
          return { take, frameEnd: false };
        }
        this.state = 'blockHeader';
        this.need = 3;
        return { take, frameEnd: false };
      }
      case 'blockHeader': {
        const h = bytes[0] | (bytes[1] << 8) | (bytes[2] << 16);
        this.blockLast = (h & 1) === 1;
        const type = (h >> 1) & 3;
        const size = h >>> 3;
        if (type === 3) throw new DecompressError(`zstd frame ${this.frames + 1} holds a block of the reserved type`, 'corrupt');
        this.state = 'blockBody';
        this.need = type === 1 ? 1 : size;
        if (this.need === 0) this.afterBody();
        return { take, frameEnd: this.frameJustEnded() };
      }
      case 'checksum': {
        this.checksum = (bytes[0] | (bytes[1] << 8) | (bytes[2] << 16) | (bytes[3] << 24)) >>> 0;
        this.endFrame();
        return { take, frameEnd: true };
      }
      case 'skipSize': {
        this.state = 'skipBody';
        this.need = (bytes[0] | (bytes[1] << 8) | (bytes[2] << 16) | (bytes[3] << 24)) >>> 0;
        if (this.need === 0) {
          this.state = 'magic';
          this.need = 4;
        }
        return { take, frameEnd: false };
      }
      default:
        return { take, frameEnd: false };
    }
  }

  private ended = false;
  private frameJustEnded(): boolean {
    const e = this.ended;
    this.ended = false;
    return e;
  }

  private afterBody(): void {
    if (this.state === 'skipBody') {
      this.state = 'magic';
      this.need = 4;
      return;
    }
    if (!this.blockLast) {
      this.state = 'blockHeader';
      this.need = 3;
    } else if (this.hasChecksum) {
      this.state = 'checksum';
      this.need = 4;
    } else {
      this.checksum = null;
      this.endFrame();
      this.ended = true;
    }
  }

  private endFrame(): void {
    this.frames++;
    this.state = 'magic';
    this.need = 4;
  }

  /** True between frames (a clean place for the stream to end). */
  get atBoundary(): boolean {
    return this.state === 'magic' && this.acc.length === 0;
  }
}

async function* unzstd(path: string, onInput: (n: number) => void): AsyncGenerator<Uint8Array> {
  const file = await FileCursor.open(path);
  try {
    const size = file.size;
    let out: Uint8Array[] = [];
    // fzstd reuses its window after the callback returns, so each block is copied.
    const d = new Decompress((data) => {
      if (data.length) out.push(data.slice());
    });
    const walker = new ZstdWalker();
    let hash = new Xxh64();
    let total = 0;
    let pos = 0;
    while (pos < size) {
      // A fresh buffer each time: the decoder keeps references to input it has not used yet.
      const buf = await file.read(pos, INPUT_BYTES);
      if (buf.length === 0) break;
      pos += buf.length;
      onInput(buf.length);
      let o = 0;
      while (o < buf.length) {
        const { take, frameEnd } = walker.step(buf, o);
        // Small pushes, each drained before the next: a run of RLE blocks cannot pile up gigabytes.
        for (let p = o; p < o + take; p += ZSTD_PUSH_BYTES) {
          const e = Math.min(o + take, p + ZSTD_PUSH_BYTES);
          try {
            d.push(buf.subarray(p, e), pos >= size && e === buf.length);
          } catch (err) {
            throw new DecompressError(`the zstd data is corrupt at about byte ${pos - buf.length + e} (${(err as Error).message}); all ${total} decompressed bytes before it were read`, 'corrupt');
          }
          if (out.length) {
            const ready = out;
            out = [];
            for (const c of ready) {
              hash.update(c);
              total += c.length;
              yield c;
            }
          }
        }
        o += take;
        if (frameEnd) {
          if (walker.checksum !== null) {
            const got = hash.digestLow32();
            if (got !== walker.checksum) {
              throw new DecompressError(
                `zstd frame ${walker.frames}'s content checksum does not match its data (the frame says ${hex8(walker.checksum)}, the data gives ${hex8(got)}); all ${total} decompressed bytes were kept`,
                'corrupt',
              );
            }
          }
          hash = new Xxh64();
        }
      }
    }
    if (!walker.atBoundary) throw new DecompressError(`the zstd stream is cut short inside frame ${walker.frames + 1}; all ${total} decompressed bytes before the cut were read`, 'corrupt');
  } finally {
    await file.close();
  }
}
