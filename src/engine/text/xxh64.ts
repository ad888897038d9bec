// XXH64 (seed 0), streaming, in 32-bit halves so it runs at memory speed without BigInt: the
// content checksum of a zstd frame is its low 32 bits (RFC 8878 §3.1.1; algorithm from the
// xxHash specification, XXH64 section).

// Primes as [high, low] 32-bit halves.
const P1H = 0x9e3779b1, P1L = 0x85ebca87;
const P2H = 0xc2b2ae3d, P2L = 0x27d4eb4f;
const P3H = 0x165667b1, P3L = 0x9e3779f9;
const P4H = 0x85ebca77, P4L = 0xc2b2ae63;
const P5H = 0x27d4eb2f, P5L = 0x165667c5;

// Results of the 64-bit helpers land here, to spare allocations in the inner loop.
let rh = 0;
let rl = 0;

function mul(ah: number, al: number, bh: number, bl: number): void {
  const a0 = al & 0xffff, a1 = al >>> 16, b0 = bl & 0xffff, b1 = bl >>> 16;
  const mid = a1 * b0 + a0 * b1;
  const midLo = mid % 65536;
  const midHi = (mid - midLo) / 65536;
  const t = a0 * b0 + midLo * 65536;
  const carry = t >= 4294967296 ? 1 : 0;
  rl = t >>> 0;
  rh = (a1 * b1 + midHi + carry + Math.imul(ah, bl) + Math.imul(al, bh)) >>> 0;
}

function add(ah: number, al: number, bh: number, bl: number): void {
  const l = al + bl;
  rl = l >>> 0;
  rh = (ah + bh + (l >= 4294967296 ? 1 : 0)) >>> 0;
}

function rotl(h: number, l: number, r: number): void {
  rh = ((h << r) | (l >>> (32 - r))) >>> 0;
  rl = ((l << r) | (h >>> (32 - r))) >>> 0;
}

/** round(acc, input) = rotl(acc + input * P2, 31) * P1 */
function round(ah: number, al: number, ih: number, il: number): void {
  mul(ih, il, P2H, P2L);
  add(ah, al, rh, rl);
  rotl(rh, rl, 31);
  mul(rh, rl, P1H, P1L);
}

export class Xxh64 {
  private v = new Uint32Array(8); // v1..v4 as [hi, lo] pairs
  private buf = new Uint8Array(32);
  private bufLen = 0;
  private total = 0;

  constructor() {
    // seed 0: v1 = P1 + P2, v2 = P2, v3 = 0, v4 = -P1
    add(P1H, P1L, P2H, P2L);
    this.v[0] = rh;
    this.v[1] = rl;
    this.v[2] = P2H;
    this.v[3] = P2L;
    this.v[4] = 0;
    this.v[5] = 0;
    // -P1 = ~P1 + 1
    add(~P1H >>> 0, ~P1L >>> 0, 0, 1);
    this.v[6] = rh;
    this.v[7] = rl;
  }

  private stripe(b: Uint8Array, o: number): void {
    const v = this.v;
    for (let k = 0; k < 4; k++) {
      const p = o + 8 * k;
      const il = (b[p] | (b[p + 1] << 8) | (b[p + 2] << 16) | (b[p + 3] << 24)) >>> 0;
      const ih = (b[p + 4] | (b[p + 5] << 8) | (b[p + 6] << 16) | (b[p + 7] << 24)) >>> 0;
      round(v[2 * k], v[2 * k + 1], ih, il);
      v[2 * k] = rh;
      v[2 * k + 1] = rl;
    }
  }

  update(data: Uint8Array): void {
    this.total += data.length;
    let o = 0;
    if (this.bufLen) {
      const n = Math.min(32 - this.bufLen, data.length);
      this.buf.set(data.subarray(0, n), this.bufLen);
      this.bufLen += n;
      o = n;
      if (this.bufLen < 32) return;
      this.stripe(this.buf, 0);
      this.bufLen = 0;
    }
    for (; o + 32 <= data.length; o += 32) this.stripe(data, o);
    if (o < data.length) {
      this.buf.set(data.subarray(o), 0);
      this.bufLen = data.length - o;
    }
  }

  /** The 64-bit digest as [high, low] halves. */
  digest(): [number, number] {
    const v = this.v;
    let hh: number;
    let hl: number;
    if (this.total >= 32) {
      rotl(v[0], v[1], 1);
      let sh = rh, sl = rl;
      rotl(v[2], v[3], 7);
      add(sh, sl, rh, rl);
      sh = rh; sl = rl;
      rotl(v[4], v[5], 12);
      add(sh, sl, rh, rl);
      sh = rh; sl = rl;
      rotl(v[6], v[7], 18);
      add(sh, sl, rh, rl);
      hh = rh;
      hl = rl;
      for (let k = 0; k < 4; k++) {
        // mergeRound: (acc ^ round(0, v)) * P1 + P4
        round(0, 0, v[2 * k], v[2 * k + 1]);
        mul((hh ^ rh) >>> 0, (hl ^ rl) >>> 0, P1H, P1L);
        add(rh, rl, P4H, P4L);
        hh = rh;
        hl = rl;
      }
    } else {
      hh = P5H;
      hl = P5L;
    }
    // h += total length (as 64 bits)
    const tl = this.total % 4294967296;
    add(hh, hl, Math.floor(this.total / 4294967296) >>> 0, tl >>> 0);
    hh = rh;
    hl = rl;
    const b = this.buf;
    let p = 0;
    const n = this.bufLen;
    for (; p + 8 <= n; p += 8) {
      const il = (b[p] | (b[p + 1] << 8) | (b[p + 2] << 16) | (b[p + 3] << 24)) >>> 0;
      const ih = (b[p + 4] | (b[p + 5] << 8) | (b[p + 6] << 16) | (b[p + 7] << 24)) >>> 0;
      round(0, 0, ih, il);
      rotl((hh ^ rh) >>> 0, (hl ^ rl) >>> 0, 27);
      mul(rh, rl, P1H, P1L);
      add(rh, rl, P4H, P4L);
      hh = rh;
      hl = rl;
    }
    if (p + 4 <= n) {
      const w = (b[p] | (b[p + 1] << 8) | (b[p + 2] << 16) | (b[p + 3] << 24)) >>> 0;
      mul(0, w, P1H, P1L);
      rotl((hh ^ rh) >>> 0, (hl ^ rl) >>> 0, 23);
      mul(rh, rl, P2H, P2L);
      add(rh, rl, P3H, P3L);
      hh = rh;
      hl = rl;
      p += 4;
    }
    for (; p < n; p++) {
      mul(0, b[p], P5H, P5L);
      rotl((hh ^ rh) >>> 0, (hl ^ rl) >>> 0, 11);
      mul(rh, rl, P1H, P1L);
      hh = rh;
      hl = rl;
    }
    // avalanche
    hl = (hl ^ (hh >>> 1)) >>> 0; // h ^= h >> 33
    mul(hh, hl, P2H, P2L);
    hh = rh;
    hl = rl;
    hl = (hl ^ ((hl >>> 29) | (hh << 3))) >>> 0; // h ^= h >> 29
    hh = (hh ^ (hh >>> 29)) >>> 0;
    mul(hh, hl, P3H, P3L);
    hh = rh;
    hl = rl;
    hl = (hl ^ hh) >>> 0; // h ^= h >> 32
    return [hh, hl];
  }

  digestLow32(): number {
    return this.digest()[1];
  }
}
