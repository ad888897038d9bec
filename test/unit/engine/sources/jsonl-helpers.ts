// Shared helpers for the JSONL source tests: temporary shards and compressed variants.

import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import type { Entry, SourceInfo } from '../../../../src/engine/sources/source.js';
import { mulberry32 } from '../../helpers/random';
export { mulberry32 };

export function tempDir(): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), 'shardwise-test-'));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

export function writeShard(dir: string, name: string, data: Uint8Array | string): string {
  const p = join(dir, name);
  writeFileSync(p, data);
  return p;
}

/**
 * A zstd frame made only of raw (stored) blocks: RFC 8878 §3.1.1 allows Block_Type 0 (Raw_Block),
 * so any conforming decoder must read it. Used because Node has no zstd compressor.
 */
export function zstdRawFrame(data: Uint8Array): Uint8Array {
  const parts: number[] = [];
  // Magic_Number 0xFD2FB528, little-endian (RFC 8878 §3.1.1).
  parts.push(0x28, 0xb5, 0x2f, 0xfd);
  // Frame_Header_Descriptor: no content size, not single-segment, no checksum, no dictionary.
  parts.push(0x00);
  // Window_Descriptor: exponent 7 → window 2^(10+7) = 128 KiB, the largest block size.
  parts.push(7 << 3);
  const out: Uint8Array[] = [Uint8Array.from(parts)];
  const BLOCK = 128 * 1024;
  let pos = 0;
  do {
    const size = Math.min(BLOCK, data.length - pos);
    const last = pos + size >= data.length ? 1 : 0;
    // Block_Header: Last_Block bit, Block_Type 0 (raw) in bits 1-2, Block_Size in bits 3-23.
    const h = last | (0 << 1) | (size << 3);
    out.push(Uint8Array.from([h & 0xff, (h >> 8) & 0xff, (h >> 16) & 0xff]));
    out.push(data.subarray(pos, pos + size));
    pos += size;
  } while (pos < data.length);
  return Buffer.concat(out);
}

/**
 * A zstd frame from explicit blocks (RFC 8878 §3.1.1.2): raw blocks carry their bytes, RLE blocks
 * (Block_Type 1) one byte repeated `count` times.
 */
export function zstdFrame(blocks: Array<{ raw: Uint8Array } | { rle: number; count: number }>): Uint8Array {
  const out: Uint8Array[] = [Uint8Array.from([0x28, 0xb5, 0x2f, 0xfd, 0x00, 7 << 3])];
  blocks.forEach((b, i) => {
    const last = i === blocks.length - 1 ? 1 : 0;
    const [type, size, body] = 'raw' in b ? [0, b.raw.length, b.raw] : [1, b.count, Uint8Array.from([b.rle])];
    const h = last | (type << 1) | (size << 3);
    out.push(Uint8Array.from([h & 0xff, (h >> 8) & 0xff, (h >> 16) & 0xff]), body);
  });
  return Buffer.concat(out);
}

/**
 * Compresses with the zstd command (Debian package zstd, the reference implementation). A missing
 * command fails the test that asks for it: the machine is set up with it, and a check it cannot
 * run is not passed.
 */
export function zstdCommand(data: Uint8Array): Uint8Array {
  try {
    return execFileSync('zstd', ['-q', '-c', '-3'], { input: data, maxBuffer: 1 << 30 });
  } catch (e) {
    throw new Error(`the zstd command (Debian package zstd) could not compress the test data: ${(e as Error).message}`);
  }
}

export function gzip(data: Uint8Array): Uint8Array {
  return gzipSync(data);
}

/** Opens, indexes and reads every entry, then closes. */
export async function readAll(path: string, opts: { maxLineBytes?: number } = {}): Promise<{ info: SourceInfo; entries: Entry[] }> {
  const src = new JsonlSource(path, opts);
  try {
    await src.open();
    const info = await src.index();
    const entries = await src.read(0, info.entries);
    return { info: src.info(), entries };
  } finally {
    await src.close();
  }
}

/** Streams every entry without an index. */
export async function scanAll(path: string, opts: { maxLineBytes?: number } = {}): Promise<{ info: SourceInfo; entries: Entry[] }> {
  const src = new JsonlSource(path, opts);
  try {
    const entries: Entry[] = [];
    for await (const e of src.scan()) entries.push(e);
    return { info: src.info(), entries };
  } finally {
    await src.close();
  }
}

