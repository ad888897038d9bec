// Byte-range readers over local files, and the Blob-like face parquet-wasm asks for.

import { open, stat } from 'node:fs/promises';
import type { ByteReader } from '../source.js';

export type ReaderFactory = (path: string) => Promise<ByteReader>;

/** Opens a local file for range reads; rejects with a message starting with the path. */
export async function openFileReader(path: string): Promise<ByteReader> {
  let st;
  try {
    st = await stat(path);
  } catch (e) {
    throw new Error(`${path}: cannot open (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  if (!st.isFile()) throw new Error(`${path}: not a file`);
  const fh = await open(path, 'r').catch((e: NodeJS.ErrnoException) => {
    throw new Error(`${path}: cannot open (${e.code ?? e.message})`);
  });
  const size = st.size;
  let closed = false;
  return {
    size,
    async read(offset: number, length: number): Promise<Uint8Array> {
      if (closed) throw new Error(`${path}: reader closed`);
      const start = Math.max(0, Math.min(offset, size));
      const len = Math.max(0, Math.min(length, size - start));
      const buf = new Uint8Array(len);
      let done = 0;
      while (done < len) {
        const { bytesRead } = await fh.read(buf, done, len - done, start + done);
        if (bytesRead === 0) break;
        done += bytesRead;
      }
      return done === len ? buf : buf.subarray(0, done);
    },
    async close(): Promise<void> {
      if (closed) return;
      closed = true;
      await fh.close();
    },
  };
}

/** Wraps a reader so every byte read is counted (tests prove what a page costs with it). */
export function countingReader(inner: ByteReader): ByteReader & { bytesRead: number; reads: number } {
  const r = {
    size: inner.size,
    bytesRead: 0,
    reads: 0,
    async read(offset: number, length: number) {
      const b = await inner.read(offset, length);
      r.bytesRead += b.length;
      r.reads += 1;
      return b;
    },
    close: () => inner.close(),
  };
  return r;
}

/** The subset of Blob that parquet-wasm's `ParquetFile.fromFile` uses: size, slice, arrayBuffer. */
export interface BlobLike {
  readonly size: number;
  slice(start?: number, end?: number): BlobLike;
  arrayBuffer(): Promise<ArrayBuffer>;
}

export function blobOf(reader: ByteReader, start = 0, end = reader.size): BlobLike {
  const size = Math.max(0, end - start);
  return {
    size,
    slice(a = 0, b = size) {
      const lo = a < 0 ? Math.max(0, size + a) : Math.min(a, size);
      const hi = b < 0 ? Math.max(0, size + b) : Math.min(b, size);
      return blobOf(reader, start + lo, start + Math.max(lo, hi));
    },
    async arrayBuffer() {
      const bytes = await reader.read(start, size);
      return bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
    },
  };
}

/**
 * A reader that answers reads inside [offset, offset + bytes.length) from `bytes` already read
 * (the footer, read once for our own checks and again asked for by the decoder).
 */
export function keepRange(inner: ByteReader, offset: number, bytes: Uint8Array): ByteReader {
  const end = offset + bytes.length;
  return {
    size: inner.size,
    async read(at: number, length: number): Promise<Uint8Array> {
      const lo = Math.max(0, Math.min(at, inner.size));
      const hi = Math.max(lo, Math.min(at + length, inner.size));
      if (lo >= offset && hi <= end) return bytes.slice(lo - offset, hi - offset);
      return inner.read(at, length);
    },
    close: () => inner.close(),
  };
}

/** Gaps up to this many bytes are read through when ranges are coalesced. */
const COALESCE_GAP = 64 * 1024;
/** No coalesced read grows past this, so many small neighbours never become one huge read. */
const COALESCE_MAX = 8 * 1024 * 1024;

/**
 * Reads the given ranges in as few reads as their neighbourhood allows (neighbours closer than
 * `gap` bytes are merged) and returns a reader answering reads inside them from memory; other
 * reads go to `inner`. Used to read every batch header of an Arrow file at once on open.
 */
export async function prefetchRanges(inner: ByteReader, ranges: { offset: number; length: number }[], gap = COALESCE_GAP): Promise<ByteReader> {
  // A range a damaged footer makes huge, or puts outside the file, is not fetched here: its own
  // read (and its own finding) happens where it is used.
  const sorted = ranges
    .filter((r) => r.length > 0 && r.length <= COALESCE_MAX && r.offset >= 0 && r.offset < inner.size)
    .sort((a, b) => a.offset - b.offset);
  const merged: { offset: number; end: number }[] = [];
  for (const r of sorted) {
    const last = merged[merged.length - 1];
    const end = Math.min(inner.size, r.offset + r.length);
    if (last && r.offset - last.end <= gap && end - last.offset <= COALESCE_MAX) last.end = Math.max(last.end, end);
    else merged.push({ offset: r.offset, end });
  }
  const kept: { offset: number; bytes: Uint8Array }[] = [];
  for (let k = 0; k < merged.length; k += 16) {
    const part = merged.slice(k, k + 16);
    const got = await Promise.all(part.map((m) => inner.read(m.offset, m.end - m.offset)));
    got.forEach((bytes, i) => kept.push({ offset: part[i].offset, bytes }));
  }
  return {
    size: inner.size,
    async read(at: number, length: number): Promise<Uint8Array> {
      const lo = Math.max(0, Math.min(at, inner.size));
      const hi = Math.max(lo, Math.min(at + length, inner.size));
      // Binary search for the last kept range starting at or before `lo`.
      let a = 0;
      let b = kept.length - 1;
      while (a < b) {
        const m = (a + b + 1) >> 1;
        if (kept[m].offset <= lo) a = m;
        else b = m - 1;
      }
      const k = kept[a];
      if (k && k.offset <= lo && hi <= k.offset + k.bytes.length) return k.bytes.subarray(lo - k.offset, hi - k.offset);
      return inner.read(at, length);
    },
    close: () => inner.close(),
  };
}
