// Rows of one uncompressed Arrow record batch read by byte range (arrow.apache.org/docs/format/
// Columnar.html, "Buffer Layout"): for each column only the validity bits, fixed-width values or
// offsets of the rows asked for, then the bytes (or, for lists, the child rows) those offsets
// span; struct children share their parent's rows. Columns of other layouts (dictionary-encoded,
// 64-bit offsets, views, unions, maps, fixed-size lists) and compressed bodies are read whole by
// the caller: a compressed buffer can only be decompressed from its start.

import { DataType, RecordBatch, Struct, makeData, type Field, type Schema } from 'apache-arrow';
import type { ByteReader } from '../source.js';
import { prefetchRanges } from './byteReader.js';
import { batchBuffers } from './ipc.js';

/** A page's ranges merge only across small gaps: what it reads stays close to what it shows. */
const SLICE_GAP = 4096;

/** The rows asked for span more bytes than the memory cap. */
export class SliceLimitError extends Error {}

type Kind = { width: number } | { bits: true } | { offsets: true } | { list: true } | { struct: true };

/** How a column's values lie in its buffers, or null for a layout this slice reader leaves to the whole-batch path. */
function kindOf(f: Field): Kind | null {
  const t = f.type;
  if (DataType.isDictionary(t)) return null;
  if (DataType.isBool(t)) return { bits: true };
  if (DataType.isUtf8(t) || DataType.isBinary(t)) return { offsets: true };
  if (DataType.isList(t)) return { list: true };
  if (DataType.isStruct(t)) return { struct: true };
  if (DataType.isInt(t) || DataType.isTime(t) || DataType.isDecimal(t)) return { width: t.bitWidth / 8 };
  if (DataType.isFloat(t)) return { width: [2, 4, 8][t.precision] };
  if (DataType.isDate(t)) return { width: t.unit === 0 ? 4 : 8 };
  if (DataType.isTimestamp(t) || DataType.isDuration(t)) return { width: 8 };
  if (DataType.isFixedSizeBinary(t)) return { width: t.byteWidth };
  return null;
}

/** A field's place among the batch's nodes and buffers (depth-first, as Message.fbs lays them out). */
interface Slot {
  field: Field;
  kind: Kind;
  node: number;
  buffer: number;
  children: Slot[];
}

function slotsOf(fields: readonly Field[], at: { node: number; buffer: number }): Slot[] | null {
  const out: Slot[] = [];
  for (const field of fields) {
    const kind = kindOf(field);
    if (!kind) return null;
    const slot: Slot = { field, kind, node: at.node++, buffer: at.buffer, children: [] };
    at.buffer += 'offsets' in kind ? 3 : 'struct' in kind ? 1 : 2;
    if ('list' in kind || 'struct' in kind) {
      const children = slotsOf(field.type.children ?? [], at);
      if (!children) return null;
      slot.children = children;
    }
    out.push(slot);
  }
  return out;
}

/** Whether every column of `schema` can be read by row range. */
export function sliceable(schema: Schema): boolean {
  return schema.fields.length > 0 && slotsOf(schema.fields, { node: 0, buffer: 0 }) !== null;
}

function popcount(bits: Uint8Array, n: number): number {
  let set = 0;
  for (let i = 0; i < n; i++) set += (bits[i >> 3] >> (i & 7)) & 1;
  return n - set;
}

/** A buffer that does not lie as the layout says: the whole-batch path names the damage. */
class Misplaced extends Error {}

/**
 * Reads rows [from, to) of the batch whose message lies at `offset` (metadata `metaLength` bytes,
 * then the body). Returns a batch of the rows [base, to) — `base` is `from` rounded down to a
 * multiple of 8, so validity bits stay byte-aligned; nested children are read from their own
 * aligned start the same way — or null when a buffer does not lie as the layout says.
 */
export async function readRowSlice(
  reader: ByteReader,
  schema: Schema,
  block: { offset: number; metaLength: number; bodyLength: number },
  from: number,
  to: number,
  maxBytes = Infinity,
): Promise<{ batch: RecordBatch; base: number } | null> {
  const slots = slotsOf(schema.fields, { node: 0, buffer: 0 });
  if (!slots) return null;
  const { nodes, buffers } = batchBuffers(await reader.read(block.offset, block.metaLength), block.offset);
  const body = block.offset + block.metaLength;
  let total = 0;
  const range = (buffer: number, at: number, length: number): { offset: number; length: number } => {
    const buf = buffers[buffer];
    if (!buf || at < 0 || length < 0 || at + length > buf.length) throw new Misplaced();
    total += length;
    if (total > maxBytes) throw new SliceLimitError(`rows ${from}–${to} of the batch at byte ${block.offset} span more than the ${maxBytes}-byte memory cap`);
    return { offset: body + buf.offset + at, length };
  };
  const read = async (reads: { offset: number; length: number }[]): Promise<Uint8Array[]> => {
    const r = await prefetchRanges(reader, reads, SLICE_GAP);
    // Copies: typed arrays over them need their own aligned buffers.
    return Promise.all(reads.map(async (x) => (x.length ? (await r.read(x.offset, x.length)).slice() : new Uint8Array(0))));
  };

  /** Rows [lo, hi) of one field; lo is a multiple of 8. */
  async function slice(slot: Slot, lo: number, hi: number): Promise<ReturnType<typeof makeData>> {
    const node = nodes[slot.node];
    if (!node || node.length < hi) throw new Misplaced();
    const n = hi - lo;
    const kind = slot.kind;
    const vb = buffers[slot.buffer];
    const wantBits = node.nulls > 0 && vb && vb.length > 0;
    const plan: { offset: number; length: number }[] = [wantBits ? range(slot.buffer, lo / 8, Math.ceil(n / 8)) : { offset: 0, length: 0 }];
    if ('width' in kind) plan.push(range(slot.buffer + 1, lo * kind.width, n * kind.width));
    else if ('bits' in kind) plan.push(range(slot.buffer + 1, lo / 8, Math.ceil(n / 8)));
    else if ('offsets' in kind || 'list' in kind) plan.push(range(slot.buffer + 1, lo * 4, (n + 1) * 4));
    const [bits, values] = await read(plan);
    const nullBitmap = wantBits ? bits : undefined;
    const nullCount = nullBitmap ? popcount(nullBitmap, n) : 0;
    const type = slot.field.type;
    if ('struct' in kind) {
      const children = await Promise.all(slot.children.map((c) => slice(c, lo, hi)));
      return makeData({ type, length: n, nullCount, nullBitmap, children } as never);
    }
    if (!('offsets' in kind) && !('list' in kind)) return makeData({ type, length: n, nullCount, nullBitmap, data: values } as never);
    const offs = new Int32Array(values.buffer, 0, n + 1);
    for (let i = 0; i < n; i++) if (offs[i + 1] < offs[i]) throw new Misplaced();
    const start = 'list' in kind ? offs[0] - (offs[0] % 8) : offs[0];
    if (offs[0] < 0) throw new Misplaced();
    const valueOffsets = new Int32Array(n + 1);
    for (let i = 0; i <= n; i++) valueOffsets[i] = offs[i] - start;
    if ('list' in kind) {
      const child = await slice(slot.children[0], start, offs[n]);
      return makeData({ type, length: n, nullCount, nullBitmap, valueOffsets, child } as never);
    }
    const [data] = await read([range(slot.buffer + 2, start, offs[n] - start)]);
    return makeData({ type, length: n, nullCount, nullBitmap, valueOffsets, data } as never);
  }

  const base = from - (from % 8);
  try {
    const children = await Promise.all(slots.map((s) => slice(s, base, to)));
    const data = makeData({ type: new Struct(schema.fields), length: to - base, nullCount: 0, children });
    return { batch: new RecordBatch(schema, data), base };
  } catch (e) {
    if (e instanceof Misplaced) return null;
    throw e;
  }
}
