// Arrow columns to plain JSON values for the checks: one visitor over Arrow's data types, whose
// method for a type gives the conversion of one value of that type, chosen once per column.
// Exact where JSON is not: 64-bit integers beyond ±(2^53−1) and decimals become strings;
// timestamps become ISO-8601; binary becomes a length plus a short hex preview.

import { DateUnit, IntervalUnit, Precision, TimeUnit, UnionMode, Visitor } from 'apache-arrow';
import type {
  Binary,
  BinaryView,
  Bool,
  Data,
  DataType,
  Date_,
  Decimal,
  Dictionary,
  Duration,
  Field,
  FixedSizeBinary,
  FixedSizeList,
  Float,
  Int,
  Interval,
  LargeBinary,
  LargeList,
  LargeUtf8,
  List,
  Map_,
  Null,
  Struct,
  Time,
  Timestamp,
  Union,
  Utf8,
  Utf8View,
  Vector,
} from 'apache-arrow';

export { typeName, schemaColumns } from './typeName.js';

/** RFC 8259 §6: integers in this range interoperate exactly. */
export const MAX_SAFE = 2n ** 53n - 1n;

/** How many bytes of a binary value are shown as hex. */
const BINARY_PREVIEW_BYTES = 16;

export interface Unsafe {
  /** RFC 6901 pointer into the row. */
  pointer: string;
  value: string;
}

export interface ConvertContext {
  /** 64-bit integers beyond the safe range found in the current row. */
  unsafe: Unsafe[];
}

type Convert = (data: Data, i: number, ptr: string, ctx: ConvertContext) => unknown;

function esc(key: string | number): string {
  return String(key).replace(/~/g, '~0').replace(/\//g, '~1');
}

export function bigToJson(v: bigint, ptr: string, ctx: ConvertContext): number | string {
  if (v > MAX_SAFE || v < -MAX_SAFE) {
    const s = v.toString();
    ctx.unsafe.push({ pointer: ptr, value: s });
    return s;
  }
  return Number(v);
}

function floatToJson(v: number): number | string {
  // JSON has no NaN or infinities (RFC 8259 §6); keep them visible as text.
  return Number.isFinite(v) ? v : String(v);
}

export function hexPreview(bytes: Uint8Array): string {
  const n = Math.min(bytes.length, BINARY_PREVIEW_BYTES);
  let hex = '';
  for (let k = 0; k < n; k++) hex += bytes[k].toString(16).padStart(2, '0');
  return `<${bytes.length} bytes${n ? `: ${hex}${bytes.length > n ? '…' : ''}` : ''}>`;
}

const UNIT_DIGITS: Record<number, number> = {
  [TimeUnit.SECOND]: 0,
  [TimeUnit.MILLISECOND]: 3,
  [TimeUnit.MICROSECOND]: 6,
  [TimeUnit.NANOSECOND]: 9,
};

/** ISO-8601 of an instant given as an integer count of the unit since the epoch, exact to the unit. */
export function isoInstant(count: bigint, unit: TimeUnit, utc: boolean): string {
  const digits = UNIT_DIGITS[unit];
  const per = 10n ** BigInt(digits);
  let secs = count / per;
  let frac = count % per;
  if (frac < 0n) {
    frac += per;
    secs -= 1n;
  }
  const ms = Number(secs) * 1000;
  const d = new Date(ms);
  if (Number.isNaN(d.getTime())) return `${count} (${['s', 'ms', 'us', 'ns'][unit]} since epoch)`;
  // YYYY-MM-DDTHH:MM:SS, or ±YYYYYY-MM-DDTHH:MM:SS beyond years 0..9999 (ECMA-262 §21.4.1.32 expanded years).
  const base = d.toISOString().slice(0, -'.000Z'.length);
  const fracText = digits ? `.${frac.toString().padStart(digits, '0')}` : '';
  return `${base}${fracText}${utc ? 'Z' : ''}`;
}

/** ISO-8601 date of a count of days since 1970-01-01; beyond what a Date holds (±10^8 days), the count itself. */
export function isoDay(days: number): string {
  const d = new Date(days * 86_400_000);
  if (Number.isNaN(d.getTime())) return `${days} (days since epoch)`;
  return d.toISOString().slice(0, -'T00:00:00.000Z'.length);
}

function timeOfDay(count: bigint, unit: TimeUnit): string {
  const digits = UNIT_DIGITS[unit];
  const per = 10n ** BigInt(digits);
  const secs = Number(count / per);
  const frac = count % per;
  const hh = Math.floor(secs / 3600);
  const mm = Math.floor((secs % 3600) / 60);
  const ss = secs % 60;
  const p2 = (x: number) => String(x).padStart(2, '0');
  return `${p2(hh)}:${p2(mm)}:${p2(ss)}${digits ? `.${frac.toString().padStart(digits, '0')}` : ''}`;
}

/** Two's-complement little-endian 32-bit words to a signed bigint. */
function wordsToBig(words: Uint32Array, start: number, count: number): bigint {
  let v = 0n;
  for (let k = count - 1; k >= 0; k--) v = (v << 32n) | BigInt(words[start + k]);
  const bits = BigInt(count * 32);
  if (words[start + count - 1] & 0x80000000) v -= 1n << bits;
  return v;
}

export function decimalText(unscaled: bigint, scale: number): string {
  const neg = unscaled < 0n;
  let digits = (neg ? -unscaled : unscaled).toString();
  if (scale > 0) {
    digits = digits.padStart(scale + 1, '0');
    digits = `${digits.slice(0, digits.length - scale)}.${digits.slice(digits.length - scale)}`;
  } else if (scale < 0) {
    digits = digits + '0'.repeat(-scale);
  }
  return neg ? `-${digits}` : digits;
}

/**
 * The [start, end) a value's offsets give, checked against what they index: a corrupt offsets
 * buffer (a fuzzed 64-bit offset, say) must fail at the value, never loop over billions of items.
 */
function span(d: Data, i: number, limit: number): [number, number] {
  const vo = d.valueOffsets as ArrayLike<number | bigint> | undefined;
  if (!vo || i + 1 >= vo.length) throw new Error(`value ${i} has no offsets`);
  const a = Number(vo[i]);
  const b = Number(vo[i + 1]);
  if (!(a >= 0 && b >= a && b <= limit)) throw new Error(`the offsets of value ${i} (${a} to ${b}) lie outside the ${limit} items they index`);
  return [a, b];
}

function toBig(x: number | bigint): bigint {
  return typeof x === 'bigint' ? x : BigInt(Math.trunc(x));
}

/** Bytes of a view (binary_view, string_view): 16 bytes each, the value inline up to 12 bytes, else in a data buffer. */
function viewBytes(d: Data, i: number): Uint8Array {
  const views = d.values as Uint8Array;
  const at = i * 16;
  if (!views || at + 16 > views.length) throw new Error(`value ${i} has no view`);
  const dv = new DataView(views.buffer, views.byteOffset + at, 16);
  const size = dv.getInt32(0, true);
  if (size < 0) throw new Error(`view ${i} declares ${size} bytes`);
  if (size <= 12) return views.subarray(at + 4, at + 4 + size);
  const buffer = dv.getInt32(8, true);
  const offset = dv.getInt32(12, true);
  const data = d.variadicBuffers?.[buffer];
  if (!data) throw new Error(`view ${i} points into data buffer ${buffer}, which the column does not have`);
  if (offset < 0 || offset + size > data.length) throw new Error(`view ${i} (${size} bytes at ${offset}) lies outside its data buffer of ${data.length} bytes`);
  return data.subarray(offset, offset + size);
}

const utf8 = new TextDecoder('utf-8');

/**
 * The one operation of this file, as a visitor: for each data type, the function turning the value
 * at an index of a Data of that type into JSON. Nulls are handled once, around it (`converterFor`).
 */
class ToJsonVisitor extends Visitor {
  private readonly made = new WeakMap<DataType, Convert>();

  /** The null-aware conversion of `type`, made once per type object. */
  converterFor(type: DataType): Convert {
    const hit = this.made.get(type);
    if (hit) return hit;
    let visit: (t: DataType) => Convert;
    try {
      visit = this.getVisitFn(type, true);
    } catch {
      throw new Error(`values of type ${String(type)} have no JSON form here`);
    }
    const made = visit.call(this, type);
    const guarded: Convert = (data, i, ptr, ctx) => (data.getValid(i) ? made(data, i, ptr, ctx) : null);
    this.made.set(type, guarded);
    return guarded;
  }

  override visitNull(_t: Null): Convert {
    return () => null;
  }
  override visitBool(_t: Bool): Convert {
    return (d, i) => {
      const idx = d.offset + i;
      return (d.values[idx >> 3] & (1 << (idx % 8))) !== 0;
    };
  }
  override visitInt(t: Int): Convert {
    if (t.bitWidth === 64) return (d, i, p, c) => bigToJson(toBig(d.values[i]), p, c);
    return (d, i) => Number(d.values[i]);
  }
  override visitFloat(t: Float): Convert {
    if (t.precision === Precision.HALF) return (d, i) => floatToJson(halfToFloat(d.values[i]));
    return (d, i) => floatToJson(d.values[i]);
  }
  override visitUtf8(_t: Utf8 | LargeUtf8): Convert {
    return (d, i) => {
      const [a, b] = span(d, i, d.values.length);
      return utf8.decode(d.values.subarray(a, b));
    };
  }
  override visitLargeUtf8(t: LargeUtf8): Convert {
    return this.visitUtf8(t);
  }
  override visitUtf8View(_t: Utf8View): Convert {
    return (d, i) => utf8.decode(viewBytes(d, i));
  }
  override visitBinary(_t: Binary | LargeBinary): Convert {
    return (d, i) => {
      const [a, b] = span(d, i, d.values.length);
      return hexPreview(d.values.subarray(a, b));
    };
  }
  override visitLargeBinary(t: LargeBinary): Convert {
    return this.visitBinary(t);
  }
  override visitBinaryView(_t: BinaryView): Convert {
    return (d, i) => hexPreview(viewBytes(d, i));
  }
  override visitFixedSizeBinary(t: FixedSizeBinary): Convert {
    const w = t.byteWidth;
    return (d, i) => hexPreview(d.values.subarray(i * w, (i + 1) * w));
  }
  override visitDecimal(t: Decimal): Convert {
    const words = t.bitWidth / 32;
    const scale = t.scale;
    return (d, i) => {
      // Decimal32/64 arrive as narrower words; the stride tells how many 32-bit words a value takes.
      const stride = d.stride || words;
      return decimalText(wordsToBig(d.values as Uint32Array, i * stride, stride), scale);
    };
  }
  override visitDate(t: Date_): Convert {
    if (t.unit === DateUnit.DAY) return (d, i) => isoDay(Number(d.values[i]));
    return (d, i) => isoInstant(toBig(d.values[i]), TimeUnit.MILLISECOND, true).replace(/T00:00:00\.000Z$/, '');
  }
  override visitTimestamp(t: Timestamp): Convert {
    const utc = t.timezone != null && t.timezone !== '';
    return (d, i) => isoInstant(toBig(d.values[i]), t.unit, utc);
  }
  override visitTime(t: Time): Convert {
    return (d, i) => timeOfDay(toBig(d.values[i]), t.unit);
  }
  override visitDuration(_t: Duration): Convert {
    return (d, i, p, c) => bigToJson(toBig(d.values[i]), p, c);
  }
  override visitInterval(t: Interval): Convert {
    if (t.unit === IntervalUnit.YEAR_MONTH) return (d, i) => ({ months: Number(d.values[i]) });
    if (t.unit === IntervalUnit.DAY_TIME) return (d, i) => ({ days: d.values[2 * i], milliseconds: d.values[2 * i + 1] });
    return (d, i) => {
      const v = d.values as Int32Array;
      const nanos = (BigInt(v[4 * i + 3]) << 32n) | BigInt(v[4 * i + 2] >>> 0);
      return { months: v[4 * i], days: v[4 * i + 1], nanoseconds: nanos.toString() };
    };
  }
  override visitList(_t: List | LargeList): Convert {
    return (d, i, p, c) => {
      const child = d.children[0];
      const [a, b] = span(d, i, child.length);
      const conv = this.converterFor(child.type);
      const out: unknown[] = [];
      for (let k = a; k < b; k++) out.push(conv(child, k, `${p}/${k - a}`, c));
      return out;
    };
  }
  override visitLargeList(t: LargeList): Convert {
    return this.visitList(t);
  }
  override visitFixedSizeList(t: FixedSizeList): Convert {
    const n = t.listSize;
    return (d, i, p, c) => {
      const child = d.children[0];
      if ((i + 1) * n > child.length) throw new Error(`value ${i} needs items ${i * n} to ${(i + 1) * n} of a child holding ${child.length}`);
      const conv = this.converterFor(child.type);
      const out: unknown[] = [];
      for (let k = 0; k < n; k++) out.push(conv(child, i * n + k, `${p}/${k}`, c));
      return out;
    };
  }
  override visitStruct(t: Struct): Convert {
    const names = t.children.map((f: Field) => f.name);
    return (d, i, p, c) => {
      const o: Record<string, unknown> = {};
      d.children.forEach((child, k) => {
        const key = names[k];
        // defineProperty: a column named __proto__ stays an ordinary key.
        define(o, key, this.converterFor(child.type)(child, i, `${p}/${esc(key)}`, c));
      });
      return o;
    };
  }
  override visitMap(_t: Map_): Convert {
    return (d, i, p, c) => {
      const entries = d.children[0];
      const [a, b] = span(d, i, entries.length);
      const [kd, vd] = entries.children;
      const kc = this.converterFor(kd.type);
      const vc = this.converterFor(vd.type);
      const keys: unknown[] = [];
      for (let k = a; k < b; k++) keys.push(kc(kd, k, `${p}/${k - a}/key`, c));
      // Objects only when every key is a distinct string; otherwise entries keep order and duplicates.
      if (keys.every((k) => typeof k === 'string') && new Set(keys).size === keys.length) {
        const o: Record<string, unknown> = {};
        for (let k = a; k < b; k++) {
          const key = keys[k - a] as string;
          define(o, key, vc(vd, k, `${p}/${esc(key)}`, c));
        }
        return o;
      }
      const out: unknown[] = [];
      for (let k = a; k < b; k++) out.push({ key: keys[k - a], value: vc(vd, k, `${p}/${k - a}/value`, c) });
      return out;
    };
  }
  override visitDictionary(_t: Dictionary): Convert {
    return (d, i, p, c) => {
      const dict = d.dictionary as Vector | undefined;
      if (!dict) return null;
      let idx = Number(d.values[i]);
      for (const chunk of dict.data) {
        if (idx < chunk.length) return this.converterFor(chunk.type)(chunk, idx, p, c);
        idx -= chunk.length;
      }
      return null;
    };
  }
  override visitUnion(t: Union): Convert {
    const toChild = t.typeIdToChildIndex;
    const dense = t.mode === UnionMode.Dense;
    return (d, i, p, c) => {
      const code = d.typeIds[i];
      const child = d.children[toChild[code]];
      if (!child) return null;
      const at = Number(dense ? d.valueOffsets[i] : i);
      if (!(at >= 0 && at < child.length)) throw new Error(`value ${i} points at item ${at} of a union member holding ${child.length}`);
      return this.converterFor(child.type)(child, at, p, c);
    };
  }
}

function define(o: Record<string, unknown>, key: string, value: unknown): void {
  Object.defineProperty(o, key, { value, enumerable: true, writable: true, configurable: true });
}

const toJson = new ToJsonVisitor();

function halfToFloat(h: number): number {
  const s = h & 0x8000 ? -1 : 1;
  const e = (h >> 10) & 0x1f;
  const f = h & 0x3ff;
  if (e === 0) return s * 2 ** -14 * (f / 1024);
  if (e === 31) return f ? NaN : s * Infinity;
  return s * 2 ** (e - 15) * (1 + f / 1024);
}

/** The value of one column at a row of a record-batch-shaped Data (a struct of columns). */
export function columnValue(column: Data, row: number, name: string, ctx: ConvertContext): unknown {
  if (row >= column.length) throw new Error(`the column holds ${column.length} values, fewer than the batch's rows`);
  return toJson.converterFor(column.type)(column, row, `/${esc(name)}`, ctx);
}
