// Rewrites counts in a Parquet footer, for hand-made hostile files. The footer is a Thrift
// compact-protocol FileMetaData (parquet-format parquet.thrift; Thrift compact protocol spec):
// nothing in it holds an absolute offset into itself, so a varint may grow and the rest shift.

interface Field {
  /** Byte range of the field's value. */
  start: number;
  end: number;
  id: number;
  type: number;
}

class Walker {
  pos = 0;
  constructor(readonly b: Uint8Array) {}
  varint(): bigint {
    let shift = 0n;
    let v = 0n;
    for (;;) {
      const x = this.b[this.pos++];
      v |= BigInt(x & 0x7f) << shift;
      if (!(x & 0x80)) return v;
      shift += 7n;
    }
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
        const n = Number(this.varint());
        this.pos += n;
        return;
      }
      case 9:
      case 10: {
        const h = this.b[this.pos++];
        let n = h >> 4;
        if (n === 15) n = Number(this.varint());
        for (let k = 0; k < n; k++) this.skip(h & 0x0f);
        return;
      }
      case 11: {
        const n = Number(this.varint());
        if (n === 0) return;
        const kv = this.b[this.pos++];
        for (let k = 0; k < n; k++) {
          this.skip(kv >> 4);
          this.skip(kv & 0x0f);
        }
        return;
      }
      case 12:
        this.struct(() => undefined);
        return;
      default:
        throw new Error(`thrift type ${type} at ${this.pos}`);
    }
  }
  /** Walks a struct, calling `on` for each field before skipping it (unless `on` consumed it). */
  struct(on: (f: Field, w: Walker) => boolean | void): void {
    let last = 0;
    for (;;) {
      const h = this.b[this.pos++];
      if (h === 0) return;
      const type = h & 0x0f;
      const delta = h >> 4;
      const id = delta ? last + delta : Number(zigzag(this.varint()));
      last = id;
      const start = this.pos;
      if (on({ start, end: start, id, type }, this) === true) continue;
      this.pos = start;
      this.skip(type);
    }
  }
  /** Walks a list of structs, calling `each` with the element index. */
  listOfStructs(each: (k: number) => void): void {
    const h = this.b[this.pos++];
    let n = h >> 4;
    if (n === 15) n = Number(this.varint());
    for (let k = 0; k < n; k++) each(k);
  }
}

function zigzag(v: bigint): bigint {
  return (v >> 1n) ^ -(v & 1n);
}

function encodeZigzagVarint(v: bigint): number[] {
  let z = v >= 0n ? v << 1n : ((-v) << 1n) - 1n;
  const out: number[] = [];
  do {
    let byte = Number(z & 0x7fn);
    z >>= 7n;
    if (z) byte |= 0x80;
    out.push(byte);
  } while (z);
  return out;
}

/**
 * A copy of the Parquet file `file` whose footer claims `rows` rows in row group `group`, and in
 * the file's total too (so only the row group's claim is the forgery the reader must catch).
 */
export function withClaimedRows(file: Uint8Array, group: number, rows: bigint): Uint8Array {
  const size = file.length;
  const dv = new DataView(file.buffer, file.byteOffset, file.byteLength);
  const footerLen = dv.getUint32(size - 8, true);
  const footerStart = size - 8 - footerLen;
  const footer = file.subarray(footerStart, size - 8);
  const patches: { start: number; end: number; bytes: number[] }[] = [];
  const w = new Walker(footer);
  let total = 0n;
  w.struct((f, wk) => {
    if (f.id === 4 && f.type === 9) {
      wk.listOfStructs((k) => {
        wk.struct((rg, wr) => {
          if (rg.id === 3 && rg.type === 6) {
            const start = wr.pos;
            const old = zigzag(wr.varint());
            const now = k === group ? rows : old;
            total += now;
            if (k === group) patches.push({ start, end: wr.pos, bytes: encodeZigzagVarint(rows) });
            return true;
          }
          return false;
        });
      });
      return true;
    }
    return false;
  });
  // The file's own total (field 3), set to the sum so the forgery sits in the row group alone.
  const w2 = new Walker(footer);
  w2.struct((f, wk) => {
    if (f.id === 3 && f.type === 6) {
      const start = wk.pos;
      wk.varint();
      patches.push({ start, end: wk.pos, bytes: encodeZigzagVarint(total) });
      return true;
    }
    return false;
  });
  patches.sort((a, b) => a.start - b.start);
  const parts: number[] = [];
  let at = 0;
  for (const p of patches) {
    parts.push(...footer.subarray(at, p.start), ...p.bytes);
    at = p.end;
  }
  parts.push(...footer.subarray(at));
  const out = new Uint8Array(footerStart + parts.length + 8);
  out.set(file.subarray(0, footerStart), 0);
  out.set(parts, footerStart);
  const odv = new DataView(out.buffer);
  odv.setUint32(footerStart + parts.length, parts.length, true);
  out.set([0x50, 0x41, 0x52, 0x31], footerStart + parts.length + 4);
  return out;
}
