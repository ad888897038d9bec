// Rows of one uncompressed Arrow record batch read by byte range (arrow.apache.org/docs/format/
// Columnar.html, "Buffer Layout"): for each column only the validity bits, fixed-width values or
// offsets of the rows asked for, then the bytes those offsets span. Columns of other layouts
// (nested, dictionary-encoded, 64-bit offsets, views) and compressed bodies are read whole by the
// caller: a compressed buffer can only be decompressed from its start.

import { DataType, RecordBatch, Struct, makeData, type Field, type Schema } from 'apache-arrow';
import type { ByteReader } from '../source.js';
import { prefetchRanges } from './byteReader.js';
import { batchBuffers } from './ipc.js';

/** A page's ranges merge only across small gaps: what it reads stays close to what it shows. */
const SLICE_GAP = 4096;

/** The rows asked for span more bytes than the memory cap. */
export class SliceLimitError extends Error {}

type Kind = { width: number } | { bits: true } | { offsets: true };

/** How a column's values lie in its buffers, or null for a layout this slice reader leaves to the whole-batch path. */
function kindOf(f: Field): Kind | null {
  const t = f.type;
  if (DataType.isDictionary(t)) return null;
  if (DataType.isBool(t)) return { bits: true };
  if (DataType.isUtf8(t) || DataType.isBinary(t)) return { offsets: true };
  if (DataType.isInt(t) || DataType.isTime(t) || DataType.isDecimal(t)) return { width: t.bitWidth / 8 };
  if (DataType.isFloat(t)) return { width: [2, 4, 8][t.precision] };
  if (DataType.isDate(t)) return { width: t.unit === 0 ? 4 : 8 };
  if (DataType.isTimestamp(t) || DataType.isDuration(t)) return { width: 8 };
  if (DataType.isFixedSizeBinary(t)) return { width: t.byteWidth };
  return null;
}

/** Whether every column of `schema` can be read by row range. */
export function sliceable(schema: Schema): boolean {
  return schema.fields.length > 0 && schema.fields.every((f) => kindOf(f) !== null);
}

function popcount(bits: Uint8Array, n: number): number {
  let set = 0;
  for (let i = 0; i < n; i++) set += (bits[i >> 3] >> (i & 7)) & 1;
  return n - set;
}

/**
 * Reads rows [from, to) of the batch whose message lies at `offset` (metadata `metaLength` bytes,
 * then the body). Returns a batch of the rows [base, to) — `base` is `from` rounded down to a
 * multiple of 8, so validity bits stay byte-aligned — or null when a buffer does not lie as the
 * layout says (the whole-batch path then names the damage).
 */
export async function readRowSlice(
  reader: ByteReader,
  schema: Schema,
  block: { offset: number; metaLength: number; bodyLength: number },
  from: number,
  to: number,
  maxBytes = Infinity,
): Promise<{ batch: RecordBatch; base: number } | null> {
  const kinds = schema.fields.map(kindOf);
  if (kinds.some((k) => k === null)) return null;
  const { nodes, buffers } = batchBuffers(await reader.read(block.offset, block.metaLength), block.offset);
  const body = block.offset + block.metaLength;
  const base = from - (from % 8);
  const n = to - base;
  // First read: validity bits, fixed-width values and offsets of the rows, in coalesced reads.
  type Plan = { kind: Kind; nulls: number; validity?: { offset: number; length: number }; values: { offset: number; length: number }; data?: number };
  const plans: Plan[] = [];
  let b = 0;
  for (let c = 0; c < kinds.length; c++) {
    const kind = kinds[c]!;
    const node = nodes[c];
    const need = 'offsets' in kind ? 3 : 2;
    if (!node || b + need > buffers.length || node.length < to) return null;
    const [vb, xb] = [buffers[b], buffers[b + 1]];
    const plan: Plan = { kind, nulls: node.nulls, values: { offset: 0, length: 0 } };
    if (node.nulls > 0 && vb.length > 0) plan.validity = { offset: body + vb.offset + base / 8, length: Math.ceil(n / 8) };
    if ('width' in kind) plan.values = { offset: body + xb.offset + base * kind.width, length: n * kind.width };
    else if ('bits' in kind) plan.values = { offset: body + xb.offset + base / 8, length: Math.ceil(n / 8) };
    else {
      plan.values = { offset: body + xb.offset + base * 4, length: (n + 1) * 4 };
      plan.data = b + 2;
    }
    const inside = (r: { offset: number; length: number }, buf: { offset: number; length: number }) => r.offset + r.length <= body + buf.offset + buf.length;
    if ((plan.validity && !inside(plan.validity, vb)) || !inside(plan.values, xb)) return null;
    plans.push(plan);
    b += need;
  }
  const first = await prefetchRanges(reader, plans.flatMap((p) => (p.validity ? [p.validity, p.values] : [p.values])), SLICE_GAP);
  const copy = async (r: { offset: number; length: number }) => (await first.read(r.offset, r.length)).slice();
  const parts = await Promise.all(plans.map(async (p) => ({ validity: p.validity ? await copy(p.validity) : undefined, values: await copy(p.values) })));
  // Second read: the bytes the rows' offsets span, for each variable-width column.
  const spans = plans.map((p, c) => {
    if (p.data === undefined) return null;
    const offs = new Int32Array(parts[c].values.buffer, 0, n + 1);
    const buf = buffers[p.data];
    for (let i = 0; i < n; i++) if (offs[i + 1] < offs[i]) return undefined;
    if (offs[0] < 0 || offs[n] > buf.length) return undefined;
    return { offset: body + buf.offset + offs[0], length: offs[n] - offs[0], start: offs[0], offs };
  });
  if (spans.some((s) => s === undefined)) return null;
  const total = plans.reduce((a, p) => a + p.values.length + (p.validity?.length ?? 0), 0) + spans.reduce((a, s) => a + (s?.length ?? 0), 0);
  if (total > maxBytes) throw new SliceLimitError(`rows ${from}–${to} of the batch at byte ${block.offset} span ${total} bytes, over the ${maxBytes}-byte memory cap`);
  const second = await prefetchRanges(reader, spans.filter((s) => s && s.length > 0) as { offset: number; length: number }[], SLICE_GAP);
  const children = await Promise.all(
    plans.map(async (p, c) => {
      const field = schema.fields[c];
      const { validity, values } = parts[c];
      const nullCount = validity ? popcount(validity, n) : 0;
      const span = spans[c];
      if (span) {
        const data = span.length > 0 ? (await second.read(span.offset, span.length)).slice() : new Uint8Array(0);
        const valueOffsets = new Int32Array(n + 1);
        for (let i = 0; i <= n; i++) valueOffsets[i] = span.offs[i] - span.start;
        return makeData({ type: field.type, length: n, nullCount, nullBitmap: validity, valueOffsets, data } as never);
      }
      return makeData({ type: field.type, length: n, nullCount, nullBitmap: validity, data: values } as never);
    }),
  );
  const data = makeData({ type: new Struct(schema.fields), length: n, nullCount: 0, children });
  return { batch: new RecordBatch(schema, data), base };
}
