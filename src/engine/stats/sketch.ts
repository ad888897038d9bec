// Mergeable summaries of a shard's numbers, so that per-shard reports combine into exactly the
// report one run over all shards gives: a relative-error quantile sketch, a distinct-count sketch
// and a fixed-bin histogram. Each serialises to plain JSON and merges by adding.

/**
 * DDSketch (Masson, Rim, Lee: "DDSketch: A Fast and Fully-Mergeable Quantile Sketch with
 * Relative-Error Guarantees", VLDB 2019): values fall in logarithmic bins of ratio
 * γ = (1+α)/(1−α); a quantile is answered within relative error α. Bins are integer counts keyed
 * by index, so merging is exact addition and a merged sketch equals the single-run sketch.
 */
export class QuantileSketch {
  readonly alpha: number;
  private readonly gamma: number;
  private readonly logGamma: number;
  private bins = new Map<number, number>();
  zeros = 0;
  count = 0;
  min = Infinity;
  max = -Infinity;

  constructor(alpha = 0.01) {
    if (!(alpha > 0 && alpha < 1)) throw new RangeError(`sketch accuracy must be in (0, 1), not ${alpha}`);
    this.alpha = alpha;
    this.gamma = (1 + alpha) / (1 - alpha);
    this.logGamma = Math.log(this.gamma);
  }

  /** Adds a non-negative value (token counts are). */
  add(value: number, times = 1): void {
    if (!(value >= 0) || !Number.isFinite(value)) return;
    if (value === 0) this.zeros += times;
    else {
      const i = Math.ceil(Math.log(value) / this.logGamma);
      this.bins.set(i, (this.bins.get(i) ?? 0) + times);
    }
    this.count += times;
    if (value < this.min) this.min = value;
    if (value > this.max) this.max = value;
  }

  merge(other: QuantileSketch): void {
    if (other.alpha !== this.alpha) throw new Error(`cannot merge sketches of accuracy ${this.alpha} and ${other.alpha}`);
    for (const [i, n] of other.bins) this.bins.set(i, (this.bins.get(i) ?? 0) + n);
    this.zeros += other.zeros;
    this.count += other.count;
    this.min = Math.min(this.min, other.min);
    this.max = Math.max(this.max, other.max);
  }

  /**
   * The value at quantile q (0..1), nearest-rank as the exact percentiles: the bin holding the
   * ⌈q·n⌉-th smallest value, answered as the bin's midpoint 2γ^i/(γ+1), kept within [min, max]
   * and rounded to a whole number (counts are whole).
   */
  quantile(q: number): number {
    if (this.count === 0) return 0;
    const rank = Math.max(1, Math.ceil(q * this.count));
    if (rank <= this.zeros) return 0;
    let seen = this.zeros;
    const keys = [...this.bins.keys()].sort((a, b) => a - b);
    for (const i of keys) {
      seen += this.bins.get(i)!;
      if (seen >= rank) {
        const mid = (2 * Math.pow(this.gamma, i)) / (this.gamma + 1);
        return Math.round(Math.min(this.max, Math.max(this.min, mid)));
      }
    }
    return this.max;
  }

  toJSON(): QuantileSketchState {
    const keys = [...this.bins.keys()].sort((a, b) => a - b);
    return {
      kind: 'ddsketch',
      alpha: this.alpha,
      count: this.count,
      zeros: this.zeros,
      min: this.count ? this.min : null,
      max: this.count ? this.max : null,
      bins: keys.map((k) => [k, this.bins.get(k)!]),
    };
  }

  static fromJSON(s: QuantileSketchState): QuantileSketch {
    if (s?.kind !== 'ddsketch' || !Array.isArray(s.bins)) throw new Error('not a quantile sketch (kind "ddsketch")');
    const q = new QuantileSketch(s.alpha);
    for (const [k, n] of s.bins) q.bins.set(k, n);
    q.zeros = s.zeros;
    q.count = s.count;
    q.min = s.min ?? Infinity;
    q.max = s.max ?? -Infinity;
    return q;
  }
}

export interface QuantileSketchState {
  kind: 'ddsketch';
  alpha: number;
  count: number;
  zeros: number;
  min: number | null;
  max: number | null;
  /** [bin index, count] pairs, ascending. */
  bins: [number, number][];
}

/**
 * HyperLogLog (Flajolet, Fusy, Gandouet, Meunier 2007) with 2^p registers, fed 64-bit hashes as
 * 16 hex digits; merging takes each register's maximum, so a merged sketch equals the one a
 * single pass would build. Relative standard error about 1.04/√(2^p) (0.8 % at p = 14).
 */
export class DistinctSketch {
  readonly p: number;
  private readonly registers: Uint8Array;

  constructor(p = 14) {
    if (!Number.isInteger(p) || p < 4 || p > 16) throw new RangeError(`distinct sketch precision must be 4..16, not ${p}`);
    this.p = p;
    this.registers = new Uint8Array(1 << p);
  }

  /** Adds a 64-bit hash given as 16 hex digits. */
  addHash(hex: string): void {
    const hi = parseInt(hex.slice(0, 8), 16) >>> 0;
    const lo = parseInt(hex.slice(8, 16), 16) >>> 0;
    const index = hi >>> (32 - this.p);
    // The remaining 64 − p bits: the rank is the position of the first 1 bit, counted from 1.
    const restHi = (hi << this.p) >>> 0;
    let rank: number;
    if (restHi !== 0) rank = Math.clz32(restHi) + 1;
    else rank = 32 - this.p + (lo !== 0 ? Math.clz32(lo) + 1 : 33);
    if (rank > this.registers[index]) this.registers[index] = rank;
  }

  merge(other: DistinctSketch): void {
    if (other.p !== this.p) throw new Error(`cannot merge distinct sketches of precision ${this.p} and ${other.p}`);
    for (let i = 0; i < this.registers.length; i++) if (other.registers[i] > this.registers[i]) this.registers[i] = other.registers[i];
  }

  estimate(): number {
    const m = this.registers.length;
    let sum = 0;
    let empty = 0;
    for (const r of this.registers) {
      sum += Math.pow(2, -r);
      if (r === 0) empty++;
    }
    const alphaM = 0.7213 / (1 + 1.079 / m);
    const raw = (alphaM * m * m) / sum;
    // Small ranges: linear counting, as the paper recommends below 5/2·m.
    if (raw <= 2.5 * m && empty > 0) return Math.round(m * Math.log(m / empty));
    return Math.round(raw);
  }

  toJSON(): DistinctSketchState {
    let bin = '';
    for (const r of this.registers) bin += String.fromCharCode(r);
    return { kind: 'hyperloglog', p: this.p, registers: btoa(bin) };
  }

  static fromJSON(s: DistinctSketchState): DistinctSketch {
    if (s?.kind !== 'hyperloglog' || typeof s.registers !== 'string') throw new Error('not a distinct sketch (kind "hyperloglog")');
    const d = new DistinctSketch(s.p);
    const bin = atob(s.registers);
    if (bin.length !== d.registers.length) throw new Error(`distinct sketch has ${bin.length} registers, expected ${d.registers.length}`);
    for (let i = 0; i < bin.length; i++) d.registers[i] = bin.charCodeAt(i);
    return d;
  }
}

export interface DistinctSketchState {
  kind: 'hyperloglog';
  p: number;
  /** One byte per register, base64. */
  registers: string;
}

/** Histogram over powers of two: bin 0 holds 0, bin k ≥ 1 holds [2^(k−1), 2^k). Adds exactly. */
export class PowerHistogram {
  readonly counts: number[] = [];

  add(value: number, times = 1): void {
    if (!(value >= 0)) return;
    const k = value < 1 ? 0 : Math.floor(Math.log2(value)) + 1;
    while (this.counts.length <= k) this.counts.push(0);
    this.counts[k] += times;
  }

  merge(other: PowerHistogram): void {
    other.counts.forEach((n, k) => this.add(k === 0 ? 0 : Math.pow(2, k - 1), n));
  }

  /** Bins as [from, to) with their counts, for reports. */
  toJSON(): { from: number; to: number; count: number }[] {
    return this.counts.map((count, k) => ({ from: k === 0 ? 0 : Math.pow(2, k - 1), to: k === 0 ? 1 : Math.pow(2, k), count }));
  }

  static fromJSON(bins: { from: number; count: number }[]): PowerHistogram {
    const h = new PowerHistogram();
    for (const b of bins) h.add(b.from, b.count);
    return h;
  }
}
