// Arrow columns to plain JSON values for the checks: one conversion per data type, chosen once per column.
// Exact where JSON is not: 64-bit integers beyond ±(2^53−1) and decimals become strings;
// timestamps become ISO-8601; binary becomes a length plus a short hex preview.

import { DataType, TimeUnit, DateUnit, IntervalUnit, Precision, UnionMode, makeVector, type Data, type Field, type Schema, type Vector } from 'apache-arrow';

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

const cache = new WeakMap<DataType, Convert>();

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
  const base = d.toISOString().slice(0, 19); // YYYY-MM-DDTHH:MM:SS (years 0..9999)
  const fracText = digits ? `.${frac.toString().padStart(digits, '0')}` : '';
  return `${base}${fracText}${utc ? 'Z' : ''}`;
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

function converterFor(type: DataType): Convert {
  const hit = cache.get(type);
  if (hit) return hit;
  const made = makeConverter(type);
  const guarded: Convert = (data, i, ptr, ctx) => (data.getValid(i) ? made(data, i, ptr, ctx) : null);
  cache.set(type, guarded);
  return guarded;
}

function makeConverter(type: DataType): Convert {
  if (DataType.isNull(type)) return () => null;
  if (DataType.isBool(type)) {
    return (d, i) => {
      const idx = d.offset + i;
      return (d.values[idx >> 3] & (1 << (idx % 8))) !== 0;
    };
  }
  if (DataType.isInt(type)) {
    if (type.bitWidth === 64) return (d, i, p, c) => bigToJson(toBig(d.values[i]), p, c);
    return (d, i) => Number(d.values[i]);
  }
  if (DataType.isFloat(type)) {
    if (type.precision === Precision.HALF) {
      return (d, i) => floatToJson(halfToFloat(d.values[i]));
    }
    return (d, i) => floatToJson(d.values[i]);
  }
  if (DataType.isUtf8(type) || DataType.isLargeUtf8(type)) {
    const dec = new TextDecoder('utf-8');
    return (d, i) => {
      const [a, b] = span(d, i, d.values.length);
      return dec.decode(d.values.subarray(a, b));
    };
  }
  if (DataType.isBinary(type) || DataType.isLargeBinary(type)) {
    return (d, i) => {
      const [a, b] = span(d, i, d.values.length);
      return hexPreview(d.values.subarray(a, b));
    };
  }
  if (DataType.isFixedSizeBinary(type)) {
    const w = type.byteWidth;
    return (d, i) => hexPreview(d.values.subarray(i * w, (i + 1) * w));
  }
  if (DataType.isDecimal(type)) {
    const words = type.bitWidth / 32;
    const scale = type.scale;
    return (d, i) => {
      // Decimal32/64 arrive as narrower words; the stride tells how many 32-bit words a value takes.
      const stride = d.stride || words;
      return decimalText(wordsToBig(d.values as Uint32Array, i * stride, stride), scale);
    };
  }
  if (DataType.isDate(type)) {
    if (type.unit === DateUnit.DAY) {
      return (d, i) => new Date(Number(d.values[i]) * 86_400_000).toISOString().slice(0, 10);
    }
    return (d, i) => isoInstant(toBig(d.values[i]), TimeUnit.MILLISECOND, true).replace(/T00:00:00\.000Z$/, '');
  }
  if (DataType.isTimestamp(type)) {
    const utc = type.timezone != null && type.timezone !== '';
    return (d, i) => isoInstant(toBig(d.values[i]), type.unit, utc);
  }
  if (DataType.isTime(type)) return (d, i) => timeOfDay(toBig(d.values[i]), type.unit);
  if (DataType.isDuration(type)) return (d, i, p, c) => bigToJson(toBig(d.values[i]), p, c);
  if (DataType.isInterval(type)) {
    if (type.unit === IntervalUnit.YEAR_MONTH) return (d, i) => ({ months: Number(d.values[i]) });
    if (type.unit === IntervalUnit.DAY_TIME) return (d, i) => ({ days: d.values[2 * i], milliseconds: d.values[2 * i + 1] });
    return (d, i) => {
      const v = d.values as Int32Array;
      const nanos = (BigInt(v[4 * i + 3]) << 32n) | BigInt(v[4 * i + 2] >>> 0);
      return { months: v[4 * i], days: v[4 * i + 1], nanoseconds: nanos.toString() };
    };
  }
  if (DataType.isList(type) || DataType.isLargeList(type)) {
    return (d, i, p, c) => {
      const child = d.children[0];
      const [a, b] = span(d, i, child.length);
      const conv = converterFor(child.type);
      const out: unknown[] = [];
      for (let k = a; k < b; k++) out.push(conv(child, k, `${p}/${k - a}`, c));
      return out;
    };
  }
  if (DataType.isFixedSizeList(type)) {
    const n = type.listSize;
    return (d, i, p, c) => {
      const child = d.children[0];
      if ((i + 1) * n > child.length) throw new Error(`value ${i} needs items ${i * n} to ${(i + 1) * n} of a child holding ${child.length}`);
      const conv = converterFor(child.type);
      const out: unknown[] = [];
      for (let k = 0; k < n; k++) out.push(conv(child, i * n + k, `${p}/${k}`, c));
      return out;
    };
  }
  if (DataType.isStruct(type)) {
    const names = type.children.map((f: Field) => f.name);
    return (d, i, p, c) => structRow(d, i, p, c, names);
  }
  if (DataType.isMap(type)) {
    return (d, i, p, c) => {
      const entries = d.children[0];
      const [a, b] = span(d, i, entries.length);
      const [kd, vd] = entries.children;
      const kc = converterFor(kd.type);
      const vc = converterFor(vd.type);
      const keys: unknown[] = [];
      for (let k = a; k < b; k++) keys.push(kc(kd, k, `${p}/${k - a}/key`, c));
      // Objects only when every key is a distinct string; otherwise entries keep order and duplicates.
      if (keys.every((k) => typeof k === 'string') && new Set(keys).size === keys.length) {
        const o: Record<string, unknown> = {};
        for (let k = a; k < b; k++) {
          const key = keys[k - a] as string;
          Object.defineProperty(o, key, { value: vc(vd, k, `${p}/${esc(key)}`, c), enumerable: true, writable: true, configurable: true });
        }
        return o;
      }
      const out: unknown[] = [];
      for (let k = a; k < b; k++) out.push({ key: keys[k - a], value: vc(vd, k, `${p}/${k - a}/value`, c) });
      return out;
    };
  }
  if (DataType.isDictionary(type)) {
    return (d, i, p, c) => {
      const dict = d.dictionary as Vector | undefined;
      if (!dict) return null;
      let idx = Number(d.values[i]);
      for (const chunk of dict.data) {
        if (idx < chunk.length) return converterFor(chunk.type)(chunk, idx, p, c);
        idx -= chunk.length;
      }
      return null;
    };
  }
  if (DataType.isUnion(type)) {
    const toChild = (type as unknown as { typeIdToChildIndex: Record<number, number> }).typeIdToChildIndex;
    const dense = type.mode === UnionMode.Dense;
    return (d, i, p, c) => {
      const code = d.typeIds[i];
      const childIndex = toChild[code];
      const child = d.children[childIndex];
      if (!child) return null;
      const at = Number(dense ? d.valueOffsets[i] : i);
      if (!(at >= 0 && at < child.length)) throw new Error(`value ${i} points at item ${at} of a union member holding ${child.length}`);
      return converterFor(child.type)(child, at, p, c);
    };
  }
  // Types this table does not know (views and newer ones): the library's own reading, made plain.
  return (d, i, p, c) => plain(genericGet(d, i), p, c);
}

function structRow(d: Data, i: number, p: string, c: ConvertContext, names: string[]): Record<string, unknown> {
  const o: Record<string, unknown> = {};
  d.children.forEach((child, k) => {
    const key = names[k];
    // defineProperty: a column named __proto__ stays an ordinary key.
    Object.defineProperty(o, key, { value: converterFor(child.type)(child, i, `${p}/${esc(key)}`, c), enumerable: true, writable: true, configurable: true });
  });
  return o;
}

function genericGet(d: Data, i: number): unknown {
  return makeVector(d).get(i);
}

function plain(v: unknown, p: string, c: ConvertContext): unknown {
  if (v === null || v === undefined) return null;
  if (typeof v === 'bigint') return bigToJson(v, p, c);
  if (typeof v === 'number') return floatToJson(v);
  if (typeof v === 'string' || typeof v === 'boolean') return v;
  if (v instanceof Uint8Array) return hexPreview(v);
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number | bigint>, (x, k) => plain(x, `${p}/${k}`, c));
  if (typeof (v as { toArray?: unknown }).toArray === 'function' && typeof (v as { length?: unknown }).length === 'number') {
    return Array.from((v as Vector).toArray() as Iterable<unknown>, (x, k) => plain(x, `${p}/${k}`, c));
  }
  if (typeof (v as { toJSON?: unknown }).toJSON === 'function') return plain((v as { toJSON(): unknown }).toJSON(), p, c);
  if (Array.isArray(v)) return v.map((x, k) => plain(x, `${p}/${k}`, c));
  if (typeof v === 'object') {
    const o: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v as object)) {
      Object.defineProperty(o, k, { value: plain(x, `${p}/${esc(k)}`, c), enumerable: true, writable: true, configurable: true });
    }
    return o;
  }
  return String(v);
}

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
  return converterFor(column.type)(column, row, `/${esc(name)}`, ctx);
}

/** A readable type name: `int64`, `timestamp[us, UTC]`, `list<struct<role: string, content: string>>`. */
export function typeName(type: DataType): string {
  if (DataType.isNull(type)) return 'null';
  if (DataType.isBool(type)) return 'bool';
  if (DataType.isInt(type)) return `${type.isSigned ? 'int' : 'uint'}${type.bitWidth}`;
  if (DataType.isFloat(type)) return type.precision === Precision.HALF ? 'float16' : type.precision === Precision.SINGLE ? 'float32' : 'float64';
  if (DataType.isUtf8(type)) return 'string';
  if (DataType.isLargeUtf8(type)) return 'large_string';
  if (DataType.isUtf8View(type)) return 'string_view';
  if (DataType.isBinary(type)) return 'binary';
  if (DataType.isLargeBinary(type)) return 'large_binary';
  if (DataType.isBinaryView(type)) return 'binary_view';
  if (DataType.isFixedSizeBinary(type)) return `fixed_size_binary[${type.byteWidth}]`;
  if (DataType.isDecimal(type)) return `decimal${type.bitWidth}(${type.precision}, ${type.scale})`;
  if (DataType.isDate(type)) return type.unit === DateUnit.DAY ? 'date32[day]' : 'date64[ms]';
  const unit = (u: TimeUnit) => ['s', 'ms', 'us', 'ns'][u];
  if (DataType.isTimestamp(type)) return `timestamp[${unit(type.unit)}${type.timezone ? `, ${type.timezone}` : ''}]`;
  if (DataType.isTime(type)) return `time${type.bitWidth}[${unit(type.unit)}]`;
  if (DataType.isDuration(type)) return `duration[${unit(type.unit)}]`;
  if (DataType.isInterval(type)) return `interval[${IntervalUnit[type.unit]?.toLowerCase() ?? type.unit}]`;
  if (DataType.isList(type)) return `list<${typeName(type.children[0].type)}>`;
  if (DataType.isLargeList(type)) return `large_list<${typeName(type.children[0].type)}>`;
  if (DataType.isFixedSizeList(type)) return `fixed_size_list<${typeName(type.children[0].type)}>[${type.listSize}]`;
  if (DataType.isStruct(type)) return `struct<${type.children.map((f: Field) => `${f.name}: ${typeName(f.type)}`).join(', ')}>`;
  if (DataType.isMap(type)) {
    const [k, v] = type.children[0].type.children;
    return `map<${typeName(k.type)}, ${typeName(v.type)}>`;
  }
  if (DataType.isDictionary(type)) return `dictionary<${typeName(type.dictionary)}, ${typeName(type.indices)}>`;
  if (DataType.isUnion(type)) return `${type.mode === UnionMode.Dense ? 'dense_union' : 'sparse_union'}<${type.children.map((f: Field) => `${f.name}: ${typeName(f.type)}`).join(', ')}>`;
  return String(type).toLowerCase();
}

export function schemaColumns(schema: Schema): { name: string; type: string }[] {
  return schema.fields.map((f) => ({ name: f.name, type: typeName(f.type) }));
}
