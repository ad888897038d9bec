// What apache-arrow cannot read is decided from the IPC metadata by our own reading of it, by
// type: a body codec the library has no decoder for, a column type it does not decode. What the
// library throws after that is damage, whatever its words. Streams are written at test time by
// apache-arrow's writer (npm) and one byte of their metadata patched (Arrow columnar format,
// "Serialization and Interprocess Communication"; Message.fbs BodyCompression; FlatBuffers binary
// layout, flatbuffers.dev).

import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CompressionType, RecordBatchReader, RecordBatchStreamWriter, Table, Utf8, compressionRegistry, vectorFromArray } from 'apache-arrow';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream.js';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile.js';
import { bodyCodec, unreadableColumns } from '../../../../src/engine/sources/columnar/ipc.js';
import { FbTable } from '../../../../src/engine/sources/columnar/flatbuf.js';
import { requireTestdata } from './testdata';

const ROWS = 40;
let dir: string;
let zstdStream: Uint8Array;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-arrow-features-'));
  // The writer stores a buffer as is (uncompressed length -1, which the format allows) when its
  // codec does not make it smaller: an encoder that only grows its input gives a valid stream that
  // declares Zstandard without needing a compressor here.
  const decode = compressionRegistry.get(CompressionType.ZSTD)?.decode ?? ((b: Uint8Array) => b);
  compressionRegistry.set(CompressionType.ZSTD, {
    encode: (b: Uint8Array) => {
      const out = new Uint8Array(b.length + 8);
      out.set([0x28, 0xb5, 0x2f, 0xfd]); // the Zstandard frame magic the writer's validator looks for
      return out;
    },
    decode,
  });
  // Our own rows: parts requests of the bicycle co-op, two batches of 20.
  const half = (from: number) =>
    new Table({
      id: vectorFromArray(Int32Array.from({ length: ROWS / 2 }, (_, i) => from + i)),
      part: vectorFromArray(Array.from({ length: ROWS / 2 }, (_, i) => `brake pad set ${from + i}`), new Utf8()),
    }).batches[0];
  const w = new RecordBatchStreamWriter({ compressionType: CompressionType.ZSTD });
  for (const b of [half(0), half(ROWS / 2)]) w.write(b);
  w.finish();
  zstdStream = w.toUint8Array(true);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => vi.restoreAllMocks());

/** Position of field `i` of the FlatBuffers table at `pos`, or 0 when absent. */
function field(b: Uint8Array, dv: DataView, pos: number, i: number): number {
  const vt = pos - dv.getInt32(pos, true);
  const size = dv.getUint16(vt, true);
  const o = 4 + 2 * i;
  if (o >= size) return 0;
  const rel = dv.getUint16(vt + o, true);
  return rel ? pos + rel : 0;
}

/**
 * A copy of a stream with every record batch's BodyCompression.codec byte set to `codec`, and each
 * message's prefix and metadata in the copy.
 */
function withBatchCodec(stream: Uint8Array, codec: number): { bytes: Uint8Array; patched: number; messages: Uint8Array[] } {
  const out = stream.slice();
  const dv = new DataView(out.buffer);
  const messages: Uint8Array[] = [];
  let at = 0;
  let patched = 0;
  while (at + 8 <= out.length && dv.getInt32(at, true) === -1) {
    const len = dv.getInt32(at + 4, true);
    if (len === 0) break;
    const meta = at + 8;
    messages.push(out.subarray(at, meta + len));
    const root = meta + dv.getUint32(meta, true);
    const bodyAt = field(out, dv, root, 3);
    const body = bodyAt ? Number(dv.getBigInt64(bodyAt, true)) : 0;
    if (out[field(out, dv, root, 1)] === 3) {
      const hp = field(out, dv, root, 2);
      const batch = hp + dv.getUint32(hp, true);
      const cp = field(out, dv, batch, 3);
      const comp = cp + dv.getUint32(cp, true);
      const codecAt = field(out, dv, comp, 0);
      expect(codecAt, 'the writer stores a non-default codec explicitly').toBeGreaterThan(0);
      out[codecAt] = codec;
      patched += 1;
    }
    at = meta + len + body;
  }
  return { bytes: out, patched, messages };
}

let n = 0;
function write(bytes: Uint8Array): string {
  const p = join(dir, `parts-${n++}.arrows`);
  writeFileSync(p, bytes);
  return p;
}

async function opened(p: string): Promise<ArrowStreamSource> {
  const s = new ArrowStreamSource(p);
  await s.open();
  await s.index();
  return s;
}

describe('a body codec is checked against the codecs the library has decoders for', () => {
  it('the unpatched stream declares zstd and reads every row (the patch is the only difference)', async () => {
    const s = await opened(write(zstdStream));
    expect(s.info().facts?.compression).toBe('zstd');
    const rows = await s.read(0, ROWS);
    await s.close();
    expect(rows.flatMap((r) => r.findings)).toEqual([]);
    expect(rows.map((r) => r.value)).toEqual(Array.from({ length: ROWS }, (_, i) => ({ id: i, part: `brake pad set ${i}` })));
  });

  it('codec number 2 (Message.fbs defines 0 and 1): read-unsupported per batch, and the library is not handed the batch', async () => {
    const { bytes, patched } = withBatchCodec(zstdStream, 2);
    expect(patched).toBe(2);
    const s = await opened(write(bytes));
    expect(s.info().findings).toEqual([]);
    const from = vi.spyOn(RecordBatchReader, 'from');
    const rows = await s.read(0, ROWS);
    await s.close();
    expect(from).not.toHaveBeenCalled();
    const findings = rows.flatMap((r) => r.findings);
    expect(findings.map((f) => [f.rule, f.message, f.group])).toEqual([0, 1].map((k) => [
      'read-unsupported',
      `batch ${k} does not decode: its body is compressed with codec number 2, which this reader cannot decompress (it reads lz4 frame and zstd)`,
      k,
    ]));
    expect(rows.every((r) => r.value === undefined)).toBe(true);
  });

  it('reads the codec of each message as the writer set it (Message.fbs CompressionType: ZSTD is 1)', () => {
    const before = withBatchCodec(zstdStream, 1);
    const after = withBatchCodec(zstdStream, 2);
    expect(before.bytes).toEqual(zstdStream);
    expect(before.messages.map(bodyCodec)).toEqual([null, 1, 1]); // the schema message has no body
    expect(after.messages.map(bodyCodec)).toEqual([null, 2, 2]);
  });
});

describe('what the library throws after our checks is damage, whatever its words', () => {
  const WORDS = ['Record batch is compressed but codec not found', 'Unrecognized type: "ListView" (25)', 'unsupported buffer layout', 'unknown type id'];

  it.each(WORDS)('a batch the library refuses with "%s" is read-corrupt, quoting it', async (words) => {
    const s = await opened(write(zstdStream));
    vi.spyOn(RecordBatchReader, 'from').mockImplementation(() => {
      throw new Error(words);
    });
    const rows = await s.read(0, ROWS);
    await s.close();
    expect(rows.flatMap((r) => r.findings).map((f) => [f.rule, f.message])).toEqual([0, 1].map((k) => ['read-corrupt', `batch ${k} does not decode: ${words}`]));
  });

  it('a column type the library does not decode is named from the schema before the library sees it (arrow-testing cpp-21.0.0 run-end encoded)', async () => {
    const p = join(requireTestdata('arrow/ipc-stream/integration/cpp-21.0.0'), 'generated_run_end_encoded.stream');
    const from = vi.spyOn(RecordBatchReader, 'from');
    const s = new ArrowStreamSource(p);
    const info = await s.open();
    await s.close();
    expect(from).not.toHaveBeenCalled();
    expect(info.findings.map((f) => f.rule)).toEqual(['read-unsupported']);
    expect(info.findings[0].message).toMatch(/^columns "ree16_int32" \(run-end encoded\), .*: a type this reader cannot read$/);
  });
});

/**
 * A schema message by hand (FlatBuffers binary layout, flatbuffers.dev; Schema.fbs: Message.header
 * is field 2, Schema.fields field 1, Field.type_type field 2 and Field.children field 5) whose
 * field k has two children that are both field k+1: a tree of 2^depth paths over depth+1 tables.
 */
function sharedChildrenSchema(depth: number, deepestType: number): Uint8Array {
  // Offsets to tables and vectors are unsigned and point forward: the message first, the deepest field last.
  const bytes: number[] = [];
  const u16 = (v: number) => bytes.push(v & 0xff, (v >> 8) & 0xff);
  const u32 = (v: number) => bytes.push(v & 0xff, (v >>> 8) & 0xff, (v >>> 16) & 0xff, (v >>> 24) & 0xff);
  const patch32 = (at: number, v: number) => bytes.splice(at, 4, v & 0xff, (v >>> 8) & 0xff, (v >>> 16) & 0xff, (v >>> 24) & 0xff);
  const forward: Array<{ slot: number; to: () => number }> = [];
  const tables: number[] = [];
  const rootSlot = bytes.length;
  u32(0);
  const msgV = bytes.length;
  u16(10), u16(8), u16(0), u16(0), u16(4);
  const msg = bytes.length;
  u32(msg - msgV);
  const headerSlot = bytes.length;
  u32(0);
  const schemaV = bytes.length;
  u16(8), u16(8), u16(0), u16(4);
  const schema = bytes.length;
  u32(schema - schemaV);
  const fieldsSlot = bytes.length;
  u32(0);
  const fields = bytes.length;
  u32(1);
  const firstSlot = bytes.length;
  u32(0);
  forward.push({ slot: firstSlot, to: () => tables[0]! });
  for (let k = 0; k <= depth; k++) {
    const vtable = bytes.length;
    u16(16), u16(12), u16(0), u16(0), u16(4), u16(0), u16(0), u16(k < depth ? 8 : 0);
    const table = bytes.length;
    tables.push(table);
    u32(table - vtable);
    bytes.push(k === depth ? deepestType : 2, 0, 0, 0); // type_type: Int, the deepest as asked
    const childrenSlot = bytes.length;
    u32(0);
    if (k < depth) {
      const vec = bytes.length;
      patch32(childrenSlot, vec - childrenSlot);
      u32(2);
      for (const slot of [bytes.length, bytes.length + 4]) forward.push({ slot, to: () => tables[k + 1]! });
      u32(0), u32(0);
    }
  }
  patch32(rootSlot, msg - rootSlot);
  patch32(headerSlot, schema - headerSlot);
  patch32(fieldsSlot, fields - fieldsSlot);
  for (const f of forward) patch32(f.slot, f.to() - f.slot);
  return new Uint8Array([8, 0, 0, 0, ...bytes]);
}

describe('a hostile schema whose fields share their children', () => {
  it('names an unreadable type deep inside a small shared tree', () => {
    expect(unreadableColumns(sharedChildrenSchema(3, 25))).toEqual([{ name: '(unnamed)', type: 'list-view' }]);
    expect(unreadableColumns(sharedChildrenSchema(3, 2))).toEqual([]);
  });
  it('walks 2^60 paths over 61 tables no further than a schema may hold fields (without a bound: centuries)', () => {
    // The walk's reads of children are counted; past a million the spy stops it, so a walk without
    // a bound fails here instead of hanging the run.
    const original = FbTable.prototype.tables;
    let reads = 0;
    const spy = vi.spyOn(FbTable.prototype, 'tables').mockImplementation(function (this: FbTable, i: number) {
      if (++reads > 1_000_000) throw new Error('the walk went on past a million children reads');
      return original.call(this, i);
    });
    try {
      expect(unreadableColumns(sharedChildrenSchema(60, 2))).toEqual([]);
    } finally {
      spy.mockRestore();
    }
    // One read of the schema's fields, then at most one per field visit (100,000: the schema limit).
    expect(reads).toBeLessThanOrEqual(100_001);
  });
});

describe('a forged footer length (Arrow IPC file format: footer length and "ARROW1" in the last 10 bytes)', () => {
  it('a 1.5 GiB footer claimed by an 8 GiB file is refused by the memory cap before it is read; the messages after the magic are still walked', async () => {
    const size = 8 * 1024 * 1024 * 1024;
    const reads: number[] = [];
    const magic = [0x41, 0x52, 0x52, 0x4f, 0x57, 0x31];
    const tail = new Uint8Array(10);
    new DataView(tail.buffer).setInt32(0, 1536 * 1024 * 1024, true);
    tail.set(magic, 4);
    const reader = {
      size,
      async read(offset: number, length: number) {
        reads.push(length);
        if (offset === size - 10 && length === 10) return tail;
        const out = new Uint8Array(Math.min(length, 1 << 20));
        if (offset === 0) out.set(magic.slice(0, Math.min(6, out.length)));
        // Anywhere else the virtual file holds zeros: a zero metadata length, the end of the messages.
        return out;
      },
      async close() {},
    };
    const src = new ArrowFileSource('/virtual/forged.arrow', { openReader: async () => reader });
    const info = await src.open();
    await src.close();
    expect(info.findings.map((f) => f.rule)).toContain('read-limit');
    expect(info.findings.find((f) => f.rule === 'read-limit')!.message).toMatch(/footer declares 1610612736 bytes, over the 1073741824-byte memory cap/);
    expect(Math.max(...reads)).toBeLessThan(1 << 20);
  });
});
