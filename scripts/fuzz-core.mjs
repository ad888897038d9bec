// The fuzzing harness behind `npm run fuzz` and the short fixed-seed run in the unit tests: seeds
// per reader (golden files from ../shared/testdata and generated files), mutations (bit flips,
// truncation at structural boundaries, spliced and duplicated chunks, huge length fields,
// zero-length and random files), each case read to the end in a pooled worker under a time bound
// and a memory cap. The worker is replaced after a trap, a timeout or running out of memory.
import { build } from 'esbuild';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { gzipSync } from 'node:zlib';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
export const READERS = ['jsonl', 'jsonl.gz', 'parquet', 'arrow-file', 'arrow-stream'];

/** mulberry32: a small seeded generator, so a run is repeatable from its seed. */
export function rng(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function testdata() {
  const d = resolve(root, '../shared/testdata');
  if (!existsSync(d)) throw new Error(`golden test data missing: ${d} (see ../shared/testdata/SOURCES.md)`);
  return d;
}

const small = (p) => statSync(p).isFile() && statSync(p).size < 256 * 1024;

/** Generated records of the demo's own scenario (a bicycle-repair co-op's support chats). */
function chatLines(n, r) {
  const parts = ['my chain skips', 'the brake pad squeals', 'a spoke snapped', 'gears will not index', 'the tyre keeps going flat'];
  const out = [];
  for (let i = 0; i < n; i++) {
    const q = parts[Math.floor(r() * parts.length)];
    out.push(JSON.stringify({ id: `t${i}`, messages: [{ role: 'user', content: `${q} (${i})` }, { role: 'assistant', content: `Check the ${q.split(' ')[1]} first; é ü 🚲 ${i}` }] }));
  }
  return `${out.join('\n')}\n`;
}

/** The unmutated inputs per reader, as bytes. */
export async function seeds(reader) {
  const td = testdata();
  const r = rng(42);
  if (reader === 'jsonl' || reader === 'jsonl.gz') {
    const texts = [chatLines(50, r), chatLines(3, r)];
    // JSONTestSuite cases (json-parsing/), one a line: accepted, rejected and implementation-defined.
    const suite = readdirSync(join(td, 'json-parsing')).sort().filter((n) => n.endsWith('.json')).slice(0, 120);
    texts.push(suite.map((n) => readFileSync(join(td, 'json-parsing', n)).toString('latin1').replace(/\n/g, ' ')).join('\n'));
    const bytes = texts.map((t) => Buffer.from(t, t.includes('\u00e9') ? 'utf8' : 'latin1'));
    return reader === 'jsonl' ? bytes : bytes.map((b) => gzipSync(b));
  }
  if (reader === 'parquet') {
    const dir = join(td, 'parquet');
    const names = ['alltypes_plain.parquet', 'alltypes_plain.snappy.parquet', 'alltypes_dictionary.parquet', 'nested_lists.snappy.parquet', 'nullable.impala.parquet', 'datapage_v2.snappy.parquet', 'byte_array_decimal.parquet', 'list_columns.parquet'];
    const out = names.filter((n) => existsSync(join(dir, n))).map((n) => readFileSync(join(dir, n)));
    const pw = await import('parquet-wasm/node');
    const { tableFromArrays, tableToIPC } = await import('apache-arrow');
    const t = tableFromArrays({ id: Int32Array.from({ length: 300 }, (_, i) => i), text: Array.from({ length: 300 }, (_, i) => `wheel ${i}`) });
    out.push(Buffer.from(pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(t, 'stream')), new pw.WriterPropertiesBuilder().setMaxRowGroupSize(100).build())));
    return out;
  }
  const dir = join(td, 'arrow/ipc-stream/integration/1.0.0-littleendian');
  const ending = reader === 'arrow-file' ? '.arrow_file' : '.stream';
  const names = readdirSync(dir).filter((n) => n.endsWith(ending) && small(join(dir, n))).sort();
  const out = names.map((n) => readFileSync(join(dir, n)));
  const { tableFromArrays, tableToIPC } = await import('apache-arrow');
  const t = tableFromArrays({ id: Int32Array.from({ length: 200 }, (_, i) => i), text: Array.from({ length: 200 }, (_, i) => `hub ${i}`) });
  out.push(Buffer.from(tableToIPC(t, reader === 'arrow-file' ? 'file' : 'stream')));
  return out;
}

/** Offsets where a format's structure changes: where cutting the file hurts most. */
function boundaries(reader, b) {
  const out = new Set([0, 1, 4, 8, b.length - 1, b.length - 4, b.length - 8, b.length - 10, b.length - 12]);
  if (reader === 'jsonl') for (let i = 0; i < b.length; i++) if (b[i] === 0x0a) out.add(i), out.add(i + 1);
  if (reader === 'jsonl.gz') [10, 18, b.length - 4].forEach((x) => out.add(x));
  if (reader === 'parquet') {
    const len = b.length >= 8 ? b.readUInt32LE(b.length - 8) : 0;
    [b.length - 8 - len, b.length - 8 - len + 1, b.length - 8 - Math.floor(len / 2)].forEach((x) => out.add(x));
  }
  if (reader.startsWith('arrow')) {
    // Walk the message prefixes: continuation, length, then metadata and body.
    let at = reader === 'arrow-file' ? 8 : 0;
    for (let k = 0; k < 200 && at + 8 <= b.length; k++) {
      out.add(at);
      out.add(at + 4);
      out.add(at + 8);
      const len = b.readInt32LE(at) === -1 ? b.readInt32LE(at + 4) : b.readInt32LE(at);
      if (len <= 0) break;
      at += (b.readInt32LE(at) === -1 ? 8 : 4) + len;
      out.add(at);
      // The body length is not in the prefix; stop after the metadata of the first few messages.
      if (k > 2) break;
    }
  }
  return [...out].filter((x) => x > 0 && x < b.length);
}

/** One mutated input, chosen by `r`, from the seeds. */
export function mutate(reader, seedList, r) {
  const pick = (a) => a[Math.floor(r() * a.length)];
  const base = Buffer.from(pick(seedList));
  const kind = pick(['flip', 'flip', 'flip', 'truncate', 'truncate', 'splice', 'duplicate', 'huge', 'huge', 'zero', 'random', 'bytes']);
  const at = () => Math.floor(r() * base.length);
  switch (kind) {
    case 'flip': {
      const n = 1 + Math.floor(r() * 8);
      for (let k = 0; k < n; k++) base[at()] ^= 1 << Math.floor(r() * 8);
      return { kind: `flip ${n}`, bytes: base };
    }
    case 'truncate': {
      const cut = pick(boundaries(reader, base));
      return { kind: `truncate at ${cut}`, bytes: base.subarray(0, cut ?? at()) };
    }
    case 'splice': {
      const other = Buffer.from(pick(seedList));
      const a = at();
      const from = Math.floor(r() * other.length);
      const len = Math.floor(r() * Math.min(4096, other.length - from));
      return { kind: 'splice', bytes: Buffer.concat([base.subarray(0, a), other.subarray(from, from + len), base.subarray(a)]) };
    }
    case 'duplicate': {
      const a = at();
      const len = Math.floor(r() * Math.min(8192, base.length - a));
      return { kind: 'duplicate', bytes: Buffer.concat([base.subarray(0, a + len), base.subarray(a, a + len), base.subarray(a + len)]) };
    }
    case 'huge': {
      // A length or count field set to a huge value: at a structural offset, or anywhere aligned.
      const where = r() < 0.6 ? pick(boundaries(reader, base)) ?? 0 : at() & ~3;
      const value = pick([0x7fffffff, 0xffffffff, 0x80000000, 0x40000000, 0x0fffffff]);
      if (where + 4 <= base.length) base.writeUInt32LE(value, where);
      if (r() < 0.3 && where + 8 <= base.length) base.writeUInt32LE(0x7fffffff, where + 4);
      return { kind: `huge at ${where}`, bytes: base };
    }
    case 'zero':
      return { kind: 'zero-length', bytes: Buffer.alloc(0) };
    case 'random': {
      const n = Math.floor(r() * 4096);
      return { kind: 'random', bytes: Buffer.from(Array.from({ length: n }, () => Math.floor(r() * 256))) };
    }
    default: {
      // A run of bytes overwritten with noise.
      const a = at();
      const n = Math.min(base.length - a, 1 + Math.floor(r() * 64));
      for (let k = 0; k < n; k++) base[a + k] = Math.floor(r() * 256);
      return { kind: 'noise', bytes: base };
    }
  }
}

let bundled = null;
/** Bundles the worker with the engine (esbuild), once per process. */
async function workerBundle() {
  if (bundled) return bundled;
  const out = mkdtempSync(join(tmpdir(), 'shardwise-fuzz-build-'));
  // The bundle lives as long as this process.
  process.once('exit', () => rmSync(out, { recursive: true, force: true }));
  await build({
    entryPoints: [join(root, 'scripts/fuzz-worker.mjs')],
    outfile: join(out, 'fuzz-worker.cjs'),
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    logLevel: 'error',
    loader: { '.wasm': 'file' },
  });
  // parquet-wasm's node build reads its .wasm from beside the bundle.
  const wasm = join(root, 'node_modules/parquet-wasm/node/parquet_wasm_bg.wasm');
  writeFileSync(join(out, 'parquet_wasm_bg.wasm'), readFileSync(wasm));
  bundled = join(out, 'fuzz-worker.cjs');
  return bundled;
}

/** A pooled worker reading one case at a time; replaced after a trap, a timeout or running out of memory. */
export async function casePool({ timeMs = 10_000, memBytes = 1 << 30 } = {}) {
  const script = await workerBundle();
  let worker = null;
  const pool = { recycled: 0 };
  const spawn = () => {
    worker = new Worker(script, { resourceLimits: { maxOldGenerationSizeMb: Math.ceil(memBytes / (1 << 20)) } });
    worker.unref();
  };
  pool.run = (path, reader) =>
    new Promise((resolveCase) => {
      if (!worker) spawn();
      const w = worker;
      const id = Math.random();
      let settled = false;
      const end = (result, recycle) => {
        if (settled) return;
        settled = true;
        clearTimeout(timer);
        w.removeAllListeners('message');
        w.removeAllListeners('error');
        w.removeAllListeners('exit');
        if (recycle) {
          pool.recycled++;
          void w.terminate();
          worker = null;
        }
        resolveCase(result);
      };
      const timer = setTimeout(() => end({ failures: [`no end within ${timeMs} ms (a hang)`] }, true), timeMs);
      w.on('message', (m) => {
        if (m.id !== id) return;
        const failures = [...m.failures];
        if (m.heapBytes > memBytes) failures.push(`memory grew to ${m.heapBytes} bytes, past the ${memBytes}-byte cap`);
        if (m.wasmBytes > memBytes * 2) failures.push(`WebAssembly memory grew to ${m.wasmBytes} bytes`);
        end({ ...m, failures }, m.trapped || m.heapBytes > memBytes / 2 || m.wasmBytes > memBytes);
      });
      w.on('error', (e) => end({ failures: [/memory|heap/i.test(String(e?.code ?? e?.message)) ? `ran out of memory (${e.code ?? e.message})` : `worker error: ${e?.stack ?? e}`] }, true));
      w.on('exit', (code) => end({ failures: [`worker exited (code ${code})`] }, true));
      w.postMessage({ id, path, reader });
    });
  pool.close = async () => {
    if (worker) await worker.terminate();
    worker = null;
  };
  return pool;
}

/** Reads saved cases (a folder of NAME.bin with NAME.json naming the reader), as the regression test does. */
export async function runSaved(dir, opts = {}) {
  const pool = await casePool(opts);
  const results = [];
  try {
    for (const n of readdirSync(dir).filter((x) => x.endsWith('.bin')).sort()) {
      const meta = JSON.parse(readFileSync(join(dir, n.replace(/\.bin$/, '.json')), 'utf8'));
      const t = Date.now();
      const res = await pool.run(join(dir, n), meta.reader);
      results.push({ name: n, reader: meta.reader, ms: Date.now() - t, ...res });
    }
  } finally {
    await pool.close();
  }
  return results;
}

/**
 * Runs `count` cases per reader from `seed`. Each case must end (records or a clear error) within
 * `timeMs`, with the worker's heap and buffers under `memBytes` and no uncaught exception or
 * unhandled rejection. Failing inputs are written to `outDir`. Returns a summary per reader.
 */
export async function runFuzz({ readers = READERS, count = 200, seed = 1, timeMs = 10_000, memBytes = 1 << 30, outDir = null, log = () => {} } = {}) {
  const pool = await casePool({ timeMs, memBytes });
  const work = mkdtempSync(join(tmpdir(), 'shardwise-fuzz-'));
  const summary = {};
  const runCase = (path, reader) => pool.run(path, reader);
  try {
    for (const reader of readers) {
      const list = await seeds(reader);
      const r = rng(seed * 1000 + READERS.indexOf(reader));
      const s = { cases: 0, failed: 0, records: 0, errors: 0, failures: [] };
      summary[reader] = s;
      for (let k = 0; k < count; k++) {
        const m = mutate(reader, list, r);
        const path = join(work, `case-${reader}-${k}`);
        writeFileSync(path, m.bytes);
        const t = Date.now();
        const res = await runCase(path, reader);
        s.cases++;
        s.records += res.entries ?? 0;
        if (res.error) s.errors++;
        if (res.failures.length) {
          s.failed++;
          const name = `${reader}-seed${seed}-case${k}`;
          s.failures.push({ name, kind: m.kind, failures: res.failures });
          if (outDir) {
            mkdirSync(outDir, { recursive: true });
            writeFileSync(join(outDir, `${name}.bin`), m.bytes);
            writeFileSync(join(outDir, `${name}.json`), JSON.stringify({ reader, seed, case: k, mutation: m.kind, failures: res.failures, ms: Date.now() - t }, null, 2));
          }
          log(`${name} (${m.kind}): ${res.failures[0].split('\n')[0]}`);
        }
        rmSync(path, { force: true });
      }
    }
  } finally {
    await pool.close();
    rmSync(work, { recursive: true, force: true });
  }
  return { summary, recycled: pool.recycled };
}
