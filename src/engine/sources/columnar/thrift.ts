// Just enough of Thrift's compact protocol (the encoding of Parquet's footer and page headers):
// decode a struct into plain values, to read column chunk places, what each chunk declares (codec,
// encodings, encryption) and page headers before anything reaches the decoder.

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

/** A decoded compact-protocol value: structs become field-id maps, binary stays bytes. */
export type ThriftValue = boolean | number | Uint8Array | ThriftValue[] | ThriftStruct;
export interface ThriftStruct {
  [id: number]: ThriftValue;
}

function readValue(c: Cursor, type: number, depth: number, inList: boolean): ThriftValue {
  if (depth > 64) throw new RangeError('nested too deep');
  switch (type) {
    case TRUE:
      return inList ? c.byte() === 1 : true;
    case FALSE:
      return inList ? c.byte() === 1 : false;
    case BYTE:
      return c.byte();
    case I16:
    case I32:
    case I64: {
      // Zigzag varint; values past 2^53 lose precision, which no offset or size of a real file reaches.
      const z = c.varint();
      return z % 2 ? -(z + 1) / 2 : z / 2;
    }
    case DOUBLE: {
      c.skip(8);
      return new DataView(c.b.buffer, c.b.byteOffset + c.at - 8, 8).getFloat64(0, true);
    }
    case BINARY: {
      const n = c.varint();
      const from = c.at;
      c.skip(n);
      return c.b.subarray(from, from + n);
    }
    case LIST:
    case SET: {
      const h = c.byte();
      const n = h >> 4 === 15 ? c.varint() : h >> 4;
      const elem = h & 0x0f;
      const out: ThriftValue[] = [];
      // Every element takes at least one byte, so a forged count ends at the buffer's end.
      for (let k = 0; k < n; k++) out.push(readValue(c, elem, depth + 1, true));
      return out;
    }
    case MAP: {
      const n = c.varint();
      const out: ThriftValue[] = [];
      if (n === 0) return out;
      const kv = c.byte();
      for (let k = 0; k < n; k++) out.push([readValue(c, kv >> 4, depth + 1, true), readValue(c, kv & 0x0f, depth + 1, true)]);
      return out;
    }
    case STRUCT:
      return readStruct(c, depth + 1);
    default:
      throw new RangeError(`unknown compact type ${type}`);
  }
}

function readStruct(c: Cursor, depth: number): ThriftStruct {
  const out: ThriftStruct = {};
  let last = 0;
  for (;;) {
    const h = c.byte();
    const type = h & 0x0f;
    if (type === STOP) return out;
    const delta = h >> 4;
    let id: number;
    if (delta) id = last + delta;
    else {
      const z = c.varint();
      id = z % 2 ? -(z + 1) / 2 : z / 2;
    }
    last = id;
    out[id] = readValue(c, type, depth, false);
  }
}

/**
 * Decodes the struct at the start of `bytes` and says how many bytes it took; throws RangeError
 * when it is malformed or cut short (a caller with more bytes may read further and try again).
 */
export function decodeStruct(bytes: Uint8Array): { value: ThriftStruct; length: number } {
  const c = new Cursor(bytes);
  const value = readStruct(c, 0);
  return { value, length: c.at };
}
