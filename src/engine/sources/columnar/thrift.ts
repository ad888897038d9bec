// Just enough of Thrift's compact protocol (the encoding of Parquet's footer) to list a struct's
// top-level field ids: used to name what a footer holds when the Parquet reader refuses it.

const STOP = 0;
const TRUE = 1;
const FALSE = 2;
const BYTE = 3;
const I16 = 4;
const I32 = 5;
const I64 = 6;
const DOUBLE = 7;
const BINARY = 8;
const LIST = 9;
const SET = 10;
const MAP = 11;
const STRUCT = 12;

class Cursor {
  at = 0;
  constructor(readonly b: Uint8Array) {}
  byte(): number {
    if (this.at >= this.b.length) throw new RangeError('cut short');
    return this.b[this.at++];
  }
  varint(): number {
    let v = 0;
    for (let shift = 0; shift < 64; shift += 7) {
      const x = this.byte();
      if (shift < 49) v += (x & 0x7f) * 2 ** shift;
      if (!(x & 0x80)) return v;
    }
    throw new RangeError('varint too long');
  }
  skip(n: number): void {
    if (n < 0 || this.at + n > this.b.length) throw new RangeError('cut short');
    this.at += n;
  }
}

function skipValue(c: Cursor, type: number, depth: number): void {
  if (depth > 64) throw new RangeError('nested too deep');
  switch (type) {
    case TRUE:
    case FALSE:
      return; // in a struct the value is the field type itself
    case BYTE:
      return c.skip(1);
    case I16:
    case I32:
    case I64:
      c.varint();
      return;
    case DOUBLE:
      return c.skip(8);
    case BINARY:
      return c.skip(c.varint());
    case LIST:
    case SET: {
      const h = c.byte();
      const n = h >> 4 === 15 ? c.varint() : h >> 4;
      const elem = h & 0x0f;
      for (let k = 0; k < n; k++) {
        if (elem === TRUE || elem === FALSE) c.skip(1);
        else skipValue(c, elem, depth + 1);
      }
      return;
    }
    case MAP: {
      const n = c.varint();
      if (n === 0) return;
      const kv = c.byte();
      for (let k = 0; k < n; k++) {
        for (const t of [kv >> 4, kv & 0x0f]) {
          if (t === TRUE || t === FALSE) c.skip(1);
          else skipValue(c, t, depth + 1);
        }
      }
      return;
    }
    case STRUCT:
      fields(c, depth + 1);
      return;
    default:
      throw new RangeError(`unknown compact type ${type}`);
  }
}

function fields(c: Cursor, depth: number, ids?: number[]): void {
  let last = 0;
  for (;;) {
    const h = c.byte();
    const type = h & 0x0f;
    if (type === STOP) return;
    const delta = h >> 4;
    let id: number;
    if (delta) id = last + delta;
    else {
      const z = c.varint();
      id = z % 2 ? -(z + 1) / 2 : z / 2;
    }
    last = id;
    ids?.push(id);
    skipValue(c, type, depth);
  }
}

/** The field ids of the struct encoded at the start of `bytes`; throws RangeError if it is malformed. */
export function structFieldIds(bytes: Uint8Array): number[] {
  const ids: number[] = [];
  fields(new Cursor(bytes), 0, ids);
  return ids;
}
