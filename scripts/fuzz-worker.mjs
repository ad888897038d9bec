// One fuzz case at a time, in a worker thread the harness can end: read the file with the reader
// named, to the end, and say how it ended. Bundled by scripts/fuzz-core.mjs with the engine.
import { parentPort } from 'node:worker_threads';
import { JsonlSource } from '../src/engine/sources/jsonl.ts';
import { ParquetSource, wasmFaults, wasmMemoryBytes } from '../src/engine/sources/parquet.ts';
import { ArrowFileSource } from '../src/engine/sources/arrowFile.ts';
import { ArrowStreamSource } from '../src/engine/sources/arrowStream.ts';

// Messages of the JavaScript engine and WebAssembly traps: a finding or error showing one is a failure.
const INTERNAL = /Cannot read propert|Cannot set propert|is not a function|is not iterable|Invalid typed array length|Invalid array length|Maximum call stack|\bundefined\b|RuntimeError|unreachable|memory access out of bounds/;

let current = null;
const fail = (kind, e) => {
  if (!current) return;
  // A decoder trap is caught by the Parquet guard and becomes a finding; it only recycles the worker.
  if (e?.constructor?.name === 'RuntimeError') return;
  current.failures.push(`${kind}: ${e?.stack ?? e}`.slice(0, 2000));
};
process.on('uncaughtException', (e) => fail('uncaught exception', e));
process.on('unhandledRejection', (e) => fail('unhandled rejection', e));

const READERS = {
  jsonl: (p) => new JsonlSource(p, { compression: 'none', maxLineBytes: 1 << 20 }),
  'jsonl.gz': (p) => new JsonlSource(p, { compression: 'gzip', maxLineBytes: 1 << 20 }),
  parquet: (p) => new ParquetSource(p),
  'arrow-file': (p) => new ArrowFileSource(p),
  'arrow-stream': (p) => new ArrowStreamSource(p),
};

/** Entries read per case at most: mutated counts may claim billions, reading stops well before. */
const MAX_ENTRIES = 20_000;

parentPort.on('message', async ({ id, path, reader }) => {
  const c = { failures: [], entries: 0, findings: 0, error: null };
  current = c;
  const faultsBefore = wasmFaults();
  const source = READERS[reader](path);
  try {
    const info = await source.open();
    await source.index();
    for (const f of info.findings) checkMessage(c, f.message);
    for await (const e of source.scan()) {
      c.entries++;
      if (e.value === undefined && e.findings.length === 0 && reader !== 'parquet' && reader.startsWith('arrow') === false) c.failures.push(`entry ${e.entry} holds neither a value nor a finding`);
      for (const f of e.findings) {
        c.findings++;
        checkMessage(c, f.message);
      }
      if (c.entries >= MAX_ENTRIES) break;
    }
    for (const f of source.info().findings) checkMessage(c, f.message);
  } catch (e) {
    // A clear error (a sentence, not an engine's internal text) is an acceptable end.
    c.error = String(e?.message ?? e).slice(0, 300);
    if (!(e instanceof Error) || INTERNAL.test(c.error)) c.failures.push(`unclear error: ${e?.stack ?? e}`.slice(0, 2000));
  } finally {
    await source.close().catch((e) => c.failures.push(`close failed: ${e?.message ?? e}`));
  }
  // Let late rejections and exceptions of this case surface before it is judged.
  await new Promise((r) => setTimeout(r, 0));
  current = null;
  const mem = process.memoryUsage();
  parentPort.postMessage({
    id,
    ...c,
    heapBytes: mem.heapUsed + mem.arrayBuffers,
    wasmBytes: wasmMemoryBytes(),
    trapped: wasmFaults() > faultsBefore,
  });
});

function checkMessage(c, message) {
  if (INTERNAL.test(message)) c.failures.push(`internal message in a finding: ${message.slice(0, 300)}`);
}
