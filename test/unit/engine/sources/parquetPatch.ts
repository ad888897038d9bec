// Finds single-byte enum values in a Parquet footer and rewrites them in place, for hand-made files
// that name a codec, an encoding or a type. The footer is a Thrift compact-protocol FileMetaData
// (parquet-format parquet.thrift; Thrift compact protocol spec): an i32 enum is a zigzag varint, one
// byte for values 0 to 63, so such a value is swapped without shifting anything else.

/** Where one enum value of the footer sits (offset in the file) and what it says now. */
export interface EnumPlace {
  at: number;
  value: number;
  /** Row group and column chunk, for ColumnMetaData fields. */
  group?: number;
  column?: number;
  /** Schema element index and name, for SchemaElement fields. */
  element?: number;
  name?: string;
}

export interface FooterEnums {
  /** ColumnMetaData.4 codec, per row group and column chunk. */
  codecs: EnumPlace[];
  /** ColumnMetaData.2 encodings, each element. */
  encodings: EnumPlace[];
  /** SchemaElement.1 type (physical), for leaves. */
  types: EnumPlace[];
}

class Walker {
  pos: number;
  constructor(
    readonly b: Uint8Array,
    start: number,
  ) {
    this.pos = start;
  }
  varint(): number {
    let v = 0;
    for (let shift = 0; ; shift += 7) {
      const x = this.b[this.pos++];
      v += (x & 0x7f) * 2 ** shift;
      if (!(x & 0x80)) return v;
    }
  }
  zigzag(): number {
    const z = this.varint();
    return z % 2 ? -(z + 1) / 2 : z / 2;
  }
  skip(type: number): void {
    switch (type) {
      case 1:
      case 2:
        return;
      case 3:
        this.pos++;
        return;
      case 4:
      case 5:
      case 6:
        this.varint();
        return;
      case 7:
        this.pos += 8;
        return;
      case 8: {
        const n = this.varint();
        this.pos += n;
        return;
      }
      case 9:
      case 10:
        this.list((elem) => (elem === 1 || elem === 2 ? this.pos++ : this.skip(elem)));
        return;
      case 11: {
        const n = this.varint();
        if (n === 0) return;
        const kv = this.b[this.pos++];
        for (let k = 0; k < n; k++) {
          for (const t of [kv >> 4, kv & 0x0f]) (t === 1 || t === 2 ? this.pos++ : this.skip(t));
        }
        return;
      }
      case 12:
        this.struct(() => false);
        return;
      default:
        throw new Error(`thrift type ${type} at ${this.pos}`);
    }
  }
  /** Walks a struct; `on` returns true when it consumed the field's value itself. */
  struct(on: (id: number, type: number) => boolean): void {
    let last = 0;
    for (;;) {
      const h = this.b[this.pos++];
      if (h === 0) return;
      const type = h & 0x0f;
      const id = h >> 4 ? last + (h >> 4) : this.zigzag();
      last = id;
      if (!on(id, type)) this.skip(type);
    }
  }
  list(each: (elem: number, k: number) => void): void {
    const h = this.b[this.pos++];
    const n = h >> 4 === 15 ? this.varint() : h >> 4;
    for (let k = 0; k < n; k++) each(h & 0x0f, k);
  }
}

/** The codec, encoding and type values of a Parquet file's footer, with their places in the file. */
export function footerEnums(file: Uint8Array): FooterEnums {
  const dv = new DataView(file.buffer, file.byteOffset, file.byteLength);
  const len = dv.getUint32(file.length - 8, true);
  const w = new Walker(file, file.length - 8 - len);
  const out: FooterEnums = { codecs: [], encodings: [], types: [] };
  const text = new TextDecoder();
  w.struct((id, type) => {
    if (id === 2 && type === 9) {
      w.list((_elem, element) => {
        let name = '';
        let typeAt: { at: number; value: number } | null = null;
        w.struct((fid, ftype) => {
          if (fid === 1 && ftype === 5) {
            typeAt = { at: w.pos, value: w.zigzag() };
            return true;
          }
          if (fid === 4 && ftype === 8) {
            const n = w.varint();
            name = text.decode(file.subarray(w.pos, w.pos + n));
            w.pos += n;
            return true;
          }
          return false;
        });
        if (typeAt) out.types.push({ ...(typeAt as { at: number; value: number }), element, name });
      });
      return true;
    }
    if (id === 4 && type === 9) {
      w.list((_e, group) =>
        w.struct((rid, rtype) => {
          if (rid !== 1 || rtype !== 9) return false;
          w.list((_c, column) =>
            w.struct((cid, ctype) => {
              if (cid !== 3 || ctype !== 12) return false;
              w.struct((mid, mtype) => {
                if (mid === 4 && mtype === 5) {
                  out.codecs.push({ at: w.pos, value: w.zigzag(), group, column });
                  return true;
                }
                if (mid === 2 && mtype === 9) {
                  w.list(() => out.encodings.push({ at: w.pos, value: w.zigzag(), group, column }));
                  return true;
                }
                return false;
              });
              return true;
            }),
          );
          return true;
        }),
      );
      return true;
    }
    return false;
  });
  return out;
}

/** A copy of `file` with the one-byte enum value at `at` set to `value` (0 to 63). */
export function withEnum(file: Uint8Array, at: number, value: number): Uint8Array {
  if (value < 0 || value > 63 || file[at] > 0x7f) throw new Error('only one-byte values are swapped in place');
  const out = file.slice();
  out[at] = value * 2;
  return out;
}

/**
 * Where the value encoding of the data page whose header starts at `offset` sits (PageHeader.5
 * DataPageHeader.2 encoding, or PageHeader.8 DataPageHeaderV2.4), and what it says now.
 */
export function pageEncoding(file: Uint8Array, offset: number): EnumPlace | null {
  const w = new Walker(file, offset);
  let found: EnumPlace | null = null;
  w.struct((id, type) => {
    if ((id === 5 || id === 8) && type === 12) {
      const want = id === 5 ? 2 : 4;
      w.struct((fid, ftype) => {
        if (fid === want && ftype === 5) {
          found = { at: w.pos, value: w.zigzag() };
          return true;
        }
        return false;
      });
      return true;
    }
    return false;
  });
  return found;
}
