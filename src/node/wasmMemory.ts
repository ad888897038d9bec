// How much WebAssembly memory this thread's decoders hold: it never shrinks, so a worker past a
// budget is recycled. Decoders register a probe here.

const probes: (() => number)[] = [];

export function registerWasmMemoryProbe(probe: () => number): void {
  probes.push(probe);
}

export function wasmMemoryBytes(): number {
  let total = 0;
  for (const p of probes) {
    try {
      total += p();
    } catch {
      // A probe of a decoder that never loaded counts nothing.
    }
  }
  return total;
}
