// A bounds-checked reader of the few FlatBuffers tables Arrow IPC metadata needs, so a corrupt or
// fuzzed header gives an error instead of a wrong read (FlatBuffers binary layout: flatbuffers.dev).

export class FlatbufError extends Error {}

export class FbTable {
  constructor(
    readonly bytes: Uint8Array,
    readonly view: DataView,
    readonly pos: number,
    private readonly vtable: number,
    private readonly vtableSize: number,
  ) {}

  static root(bytes: Uint8Array): FbTable {
    const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    need(bytes, 0, 4);
    return FbTable.at(bytes, view, view.getUint32(0, true));
  }

  static at(bytes: Uint8Array, view: DataView, pos: number): FbTable {
    need(bytes, pos, 4);
    const vtable = pos - view.getInt32(pos, true);
    need(bytes, vtable, 4);
    const vtableSize = view.getUint16(vtable, true);
    if (vtableSize < 4 || vtableSize % 2) throw new FlatbufError('bad vtable');
    need(bytes, vtable, vtableSize);
    return new FbTable(bytes, view, pos, vtable, vtableSize);
  }

  /** Absolute position of field `i`, or 0 when absent. */
  private field(i: number): number {
    const o = 4 + 2 * i;
    if (o + 2 > this.vtableSize) return 0;
    const rel = this.view.getUint16(this.vtable + o, true);
    return rel ? this.pos + rel : 0;
  }

  uint8(i: number, dflt = 0): number {
    const p = this.field(i);
    if (!p) return dflt;
    need(this.bytes, p, 1);
    return this.view.getUint8(p);
  }

  int16(i: number, dflt = 0): number {
    const p = this.field(i);
    if (!p) return dflt;
    need(this.bytes, p, 2);
    return this.view.getInt16(p, true);
  }

  int32(i: number, dflt = 0): number {
    const p = this.field(i);
    if (!p) return dflt;
    need(this.bytes, p, 4);
    return this.view.getInt32(p, true);
  }

  int64(i: number, dflt = 0n): bigint {
    const p = this.field(i);
    if (!p) return dflt;
    need(this.bytes, p, 8);
    return this.view.getBigInt64(p, true);
  }

  bool(i: number): boolean {
    return this.uint8(i) !== 0;
  }

  table(i: number): FbTable | null {
    const p = this.field(i);
    if (!p) return null;
    need(this.bytes, p, 4);
    return FbTable.at(this.bytes, this.view, p + this.view.getUint32(p, true));
  }

  string(i: number): string | null {
    const p = this.field(i);
    if (!p) return null;
    need(this.bytes, p, 4);
    const v = p + this.view.getUint32(p, true);
    need(this.bytes, v, 4);
    const len = this.view.getUint32(v, true);
    need(this.bytes, v + 4, len);
    return new TextDecoder().decode(this.bytes.subarray(v + 4, v + 4 + len));
  }

  /** A vector of tables. */
  tables(i: number): FbTable[] {
    const p = this.field(i);
    if (!p) return [];
    need(this.bytes, p, 4);
    const v = p + this.view.getUint32(p, true);
    need(this.bytes, v, 4);
    const length = this.view.getUint32(v, true);
    need(this.bytes, v + 4, length * 4);
    const out: FbTable[] = [];
    for (let k = 0; k < length; k++) {
      const e = v + 4 + 4 * k;
      out.push(FbTable.at(this.bytes, this.view, e + this.view.getUint32(e, true)));
    }
    return out;
  }

  /** A vector of structs: its element count and the position of the first element. */
  structVector(i: number, elementSize: number): { length: number; start: number } | null {
    const p = this.field(i);
    if (!p) return null;
    need(this.bytes, p, 4);
    const v = p + this.view.getUint32(p, true);
    need(this.bytes, v, 4);
    const length = this.view.getUint32(v, true);
    need(this.bytes, v + 4, length * elementSize);
    return { length, start: v + 4 };
  }
}

function need(bytes: Uint8Array, pos: number, len: number): void {
  if (pos < 0 || len < 0 || pos + len > bytes.length) throw new FlatbufError('metadata points outside its buffer');
}
