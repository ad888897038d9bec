// Byte-pair merges of very long words (a run of 300,000 spaces, a line of dashes) for a
// tokenizer.json BPE model, in typed arrays: the same merges as the library's own (lowest merge
// rank first, the leftmost on ties, as the reference Rust implementation does), without an object
// per symbol, which made such a word take minutes. Short words keep the library's code and cache.

/** The parts of @huggingface/tokenizers' BPE model this reads (checked before use). */
interface BpeModelShape {
  bpe(token: string): string[];
  merges: [string, string][];
  tokens_to_ids: Map<string, number>;
  vocab: string[];
  end_of_word_suffix?: string | null;
  continuing_subword_suffix?: string | null;
}

/** Words at least this long take the typed-array path. */
export const LONG_WORD = 2048;

function isBpeModel(m: unknown): m is BpeModelShape {
  const x = m as Partial<BpeModelShape> | null;
  return (
    !!x &&
    typeof x.bpe === 'function' &&
    Array.isArray(x.merges) &&
    x.tokens_to_ids instanceof Map &&
    Array.isArray(x.vocab) &&
    !x.end_of_word_suffix &&
    !x.continuing_subword_suffix
  );
}

/**
 * Gives the model a merge routine for long words; returns false (and changes nothing) when the
 * model is not a BPE model of the shape this knows, or a merge names a token the vocabulary lacks.
 */
export function speedUpLongWords(model: unknown): boolean {
  if (!isBpeModel(model)) return false;
  const ids = model.tokens_to_ids;
  const size = model.vocab.length;
  if (size >= 1 << 21) return false;
  // pair (left id, right id) → merge rank; a pair listed twice keeps its last rank, as the
  // library's map (and the reference's) built from the list in order does.
  const pairs = new Map<number, number>();
  const mergedId = new Int32Array(model.merges.length);
  for (let rank = 0; rank < model.merges.length; rank++) {
    const m = model.merges[rank];
    if (!Array.isArray(m) || m.length !== 2) return false;
    const a = ids.get(m[0]);
    const b = ids.get(m[1]);
    const ab = ids.get(m[0] + m[1]);
    if (a === undefined || b === undefined || ab === undefined) return false;
    pairs.set(a * 2097152 + b, rank);
    mergedId[rank] = ab;
  }
  const original = model.bpe.bind(model);
  model.bpe = (token: string): string[] => {
    if (token.length < LONG_WORD) return original(token);
    const chars = Array.from(token);
    const n = chars.length;
    const sym = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      const id = ids.get(chars[i]!);
      // A character outside the vocabulary goes through the library's own fallback.
      if (id === undefined) return original(token);
      sym[i] = id;
    }
    const next = new Int32Array(n);
    const prev = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      next[i] = i + 1 < n ? i + 1 : -1;
      prev[i] = i - 1;
    }
    const alive = new Uint8Array(n).fill(1);
    // Min-heap of rank * 2^26 + position (exact in a double: ranks < 2^26, positions < 2^26).
    if (n >= 1 << 26) return original(token);
    let heap = new Float64Array(Math.max(16, n));
    let size = 0;
    const push = (v: number) => {
      if (size === heap.length) {
        const bigger = new Float64Array(heap.length * 2);
        bigger.set(heap);
        heap = bigger;
      }
      let i = size++;
      while (i > 0) {
        const p = (i - 1) >> 1;
        if (heap[p]! <= v) break;
        heap[i] = heap[p]!;
        i = p;
      }
      heap[i] = v;
    };
    const pop = (): number => {
      const top = heap[0]!;
      const last = heap[--size]!;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1;
        if (l >= size) break;
        const r = l + 1;
        const c = r < size && heap[r]! < heap[l]! ? r : l;
        if (heap[c]! >= last) break;
        heap[i] = heap[c]!;
        i = c;
      }
      heap[i] = last;
      return top;
    };
    const offer = (i: number) => {
      const j = next[i]!;
      if (j < 0) return;
      const rank = pairs.get(sym[i]! * 2097152 + sym[j]!);
      if (rank !== undefined) push(rank * 67108864 + i);
    };
    for (let i = 0; i + 1 < n; i++) offer(i);
    while (size > 0) {
      const v = pop();
      const rank = Math.floor(v / 67108864);
      const i = v - rank * 67108864;
      const j = next[i]!;
      // A stale entry: the symbol merged away, or its pair changed since it was offered.
      if (!alive[i] || j < 0 || pairs.get(sym[i]! * 2097152 + sym[j]!) !== rank) continue;
      sym[i] = mergedId[rank]!;
      alive[j] = 0;
      const k = next[j]!;
      next[i] = k;
      if (k >= 0) prev[k] = i;
      if (prev[i]! >= 0) offer(prev[i]!);
      offer(i);
    }
    const out: string[] = [];
    for (let i = 0; i >= 0; i = next[i]!) out.push(model.vocab[sym[i]!]!);
    return out;
  };
  return true;
}
