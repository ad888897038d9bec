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
