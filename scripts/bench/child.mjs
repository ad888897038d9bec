// One measurement in a fresh process (so caches, heaps and peak RSS belong to that measurement
// alone): `node child.mjs MODE JSON-ARGS`. Prints one line `@@result {...}` on standard output.
// Shardwise's code comes from the engine bundle the benchmark built (SW_BENCH_API) and the
// worker bundle (SW_BENCH_WORKER); references are plain code a person would write.
import { closeSync, openSync, readFileSync, readSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import { prng } from './corpus.mjs';

const require = createRequire(import.meta.url);
const api = () => require(process.env.SW_BENCH_API);
const now = () => Number(process.hrtime.bigint()) / 1e6;
const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length ? (s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2) : NaN;
};
/** Bytes this process has read through read(2)-like calls so far (Linux), or null. */
const rchar = () => {
  try {
    return Number(/rchar:\s*(\d+)/.exec(readFileSync('/proc/self/io', 'utf8'))[1]);
  } catch {
    return null;
  }
};

// ---- references: the fastest plain code a person would write ----

const CHUNK = 1024 * 1024;

/** Line count with readSync into a reused 1 MiB Buffer and Buffer.indexOf(10). */
function refCountLines(path) {
  const fd = openSync(path, 'r');
  const buf = Buffer.allocUnsafe(CHUNK);
  let lines = 0;
  try {
    for (let n; (n = readSync(fd, buf, 0, CHUNK, null)) > 0; ) {
      const view = n === CHUNK ? buf : buf.subarray(0, n);
      for (let i = view.indexOf(10); i !== -1; i = view.indexOf(10, i + 1)) lines++;
    }
  } finally {
    closeSync(fd);
  }
  return lines;
}

/** Every line's JSON value through `each`, with readSync + Buffer.indexOf + JSON.parse; stops when `each` returns false. */
function refEachLine(path, each) {
  const fd = openSync(path, 'r');
  let buf = Buffer.allocUnsafe(CHUNK);
  let have = 0;
  try {
    for (;;) {
      if (have === buf.length) {
        const bigger = Buffer.allocUnsafe(buf.length * 2);
        buf.copy(bigger, 0, 0, have);
        buf = bigger;
      }
      const n = readSync(fd, buf, have, buf.length - have, null);
      const end = have + n;
      let start = 0;
      for (let i = buf.indexOf(10, have); i !== -1 && i < end; i = buf.indexOf(10, start)) {
        if (i > start && each(JSON.parse(buf.toString('utf8', start, i))) === false) return;
        start = i + 1;
      }
      if (n === 0) {
        if (end > start) each(JSON.parse(buf.toString('utf8', start, end)));
        return;
      }
      buf.copy(buf, 0, start, end);
      have = end - start;
    }
  } finally {
    closeSync(fd);
  }
}

/** The strings a record's tokens are counted over: each turn's content, each tool call's name and arguments. */
function contentStrings(value, out) {
  for (const m of value.messages ?? []) {
    if (typeof m.content === 'string') out.push(m.content);
    for (const c of m.tool_calls ?? []) out.push(c.function.name, c.function.arguments);
  }
  return out;
}

// ---- modes ----

const modes = {
  /** Shardwise's JSONL line index through the record source: open + index. */
  async index({ path }) {
    const { createSource } = api();
    const t0 = now();
    const source = createSource(path, {});
    await source.open();
    const info = await source.index();
    const ms = now() - t0;
    await source.close();
    return { ms, entries: info.entries };
  },
  async 'ref-index'({ path }) {
    const t0 = now();
    const lines = refCountLines(path);
    return { ms: now() - t0, entries: lines };
  },

  /**
   * The record view's path without VS Code: a SourceSession (its own reading worker, dist/worker.js)
   * started as the host starts it, the first page once 100 entries are known, then `jumps` random
   * pages of 100 entries after the index is complete.
   */
  async session({ path, jumps = 100, seed = 7 }) {
    const { SourceSession } = api();
    let complete = null;
    let entries = 0;
    const waiters = [];
    const wake = () => {
      for (const w of waiters.splice(0)) w();
    };
    const t0 = now();
    const session = new SourceSession(path, { stallSeconds: 0 }, {
      onInfo: (info) => ((entries = info.entries), wake()),
      onProgress: (p) => ((entries = p.entries), wake()),
      onIndexed: (info) => {
        entries = info.entries;
        if (info.complete) complete = info;
        wake();
      },
      onError: (m) => {
        throw new Error(m);
      },
    }, undefined, process.env.SW_BENCH_WORKER);
    const until = async (ok) => {
      while (!ok()) await new Promise((r) => waiters.push(r));
    };
    await session.start();
    await until(() => entries >= 100 || complete);
    const page = await session.read(0, Math.min(100, entries));
    const firstPageMs = now() - t0;
    if (page.length !== Math.min(100, entries) || page.some((e) => e.value === undefined)) throw new Error('first page incomplete');
    await until(() => complete);
    const indexMs = now() - t0;
    const rand = prng(seed);
    const times = [];
    const total = complete.entries;
    for (let j = 0; j < jumps; j++) {
      const k = Math.floor(rand() * Math.max(1, total - 100));
      const t = now();
      const got = await session.read(k, Math.min(total, k + 100));
      times.push(now() - t);
      if (got.length !== Math.min(total, k + 100) - k) throw new Error('page incomplete');
    }
    session.dispose();
    return { firstPageMs, indexMs, jumpMedianMs: median(times), entries: total, maxRSSKiB: process.resourceUsage().maxRSS };
  },
  /** Plain code for the same steps: the first 100 lines parsed, a dense Float64Array of line starts, 100 random pages read with readSync + JSON.parse. */
  async 'ref-session'({ path, jumps = 100, seed = 7 }) {
    const t0 = now();
    let n = 0;
    refEachLine(path, () => ++n < 100);
    const firstPageMs = now() - t0;
    let starts = new Float64Array(1 << 16);
    let lines = 0;
    const fd = openSync(path, 'r');
    const buf = Buffer.allocUnsafe(CHUNK);
    let base = 0;
    starts[lines++] = 0;
    for (let got; (got = readSync(fd, buf, 0, CHUNK, base)) > 0; base += got) {
      const view = got === CHUNK ? buf : buf.subarray(0, got);
      for (let i = view.indexOf(10); i !== -1; i = view.indexOf(10, i + 1)) {
        if (lines === starts.length) {
          const next = new Float64Array(starts.length * 2);
          next.set(starts);
          starts = next;
        }
        starts[lines++] = base + i + 1;
      }
    }
    const size = statSync(path).size;
    if (starts[lines - 1] >= size) lines--;
    const indexMs = now() - t0;
    const rand = prng(seed);
    const times = [];
    for (let j = 0; j < jumps; j++) {
      const k = Math.floor(rand() * Math.max(1, lines - 100));
      const t = now();
      const from = starts[k];
      const to = k + 100 < lines ? starts[k + 100] : size;
      const page = Buffer.allocUnsafe(to - from);
      readSync(fd, page, 0, to - from, from);
      let records = 0;
      for (let s = 0, i = page.indexOf(10); s < page.length; s = i + 1, i = page.indexOf(10, s)) {
        const e = i === -1 ? page.length : i;
        if (e > s) (JSON.parse(page.toString('utf8', s, e)), records++);
        if (i === -1) break;
      }
      times.push(now() - t);
      if (records !== Math.min(lines, k + 100) - k) throw new Error('reference page incomplete');
    }
    closeSync(fd);
    return { firstPageMs, indexMs, jumpMedianMs: median(times), entries: lines, maxRSSKiB: process.resourceUsage().maxRSS };
  },

  /** Token counting of the texts in a JSON file: Shardwise's tokenizer, tiktoken (WASM) or tokenizers (Rust), in this thread, or ours in `workers` worker threads. */
  async tokens({ texts: file, tokenizer, impl, workers = 1, inWorkers = workers > 1 }) {
    const texts = JSON.parse(readFileSync(file, 'utf8'));
    const bytes = texts.reduce((n, t) => n + Buffer.byteLength(t), 0);
    if (impl === 'ours' && inWorkers) return { ...(await oursInWorkers(file, tokenizer, workers)), bytes };
    let count;
    if (impl === 'ours') {
      const t = await api().loadTokenizer(tokenizer);
      count = () => texts.reduce((n, s) => n + t.count(s), 0);
    } else if (impl === 'tiktoken') {
      const enc = require('tiktoken').get_encoding(tokenizer);
      count = () => texts.reduce((n, s) => n + enc.encode_ordinary(s).length, 0);
    } else if (impl === 'rust') {
      const { Tokenizer } = require('tokenizers');
      const tok = Tokenizer.fromFile(`${tokenizer}/tokenizer.json`);
      count = async () => {
        let n = 0;
        for (let i = 0; i < texts.length; i += 256) for (const e of await tok.encodeBatch(texts.slice(i, i + 256), { addSpecialTokens: false })) n += e.getIds().length;
        return n;
      };
    } else throw new Error(`unknown tokenizer implementation ${impl}`);
    const t0 = now();
    const tokens = await count();
    return { ms: now() - t0, tokens, bytes };
  },

  /** Plain parsing: every line through readSync + Buffer.indexOf + JSON.parse, nothing else. */
  async 'ref-parse'({ path }) {
    const t0 = now();
    let records = 0;
    refEachLine(path, () => void records++);
    return { ms: now() - t0, records };
  },

  /** The hand-written peer: per line JSON.parse, ajv validate, tiktoken count of the content; one thread. */
  async peer({ path, schema, encoding = 'cl100k_base' }) {
    const Ajv = require('ajv/dist/2020').default;
    const validate = new Ajv({ allErrors: false }).compile(JSON.parse(readFileSync(schema, 'utf8')));
    const enc = require('tiktoken').get_encoding(encoding);
    const t0 = now();
    let records = 0;
    let invalid = 0;
    let tokens = 0;
    refEachLine(path, (v) => {
      records++;
      if (!validate(v)) invalid++;
      for (const s of contentStrings(v, [])) tokens += enc.encode_ordinary(s).length;
    });
    return { ms: now() - t0, records, invalid, tokens };
  },
  /** The reference tokenizer alone (tiktoken, one thread) counting the text of a chat shard, read beforehand. */
  async 'ref-count-shard'({ path, encoding = 'cl100k_base' }) {
    const texts = [];
    refEachLine(path, (v) => void contentStrings(v, texts));
    const enc = require('tiktoken').get_encoding(encoding);
    const t0 = now();
    let tokens = 0;
    for (const s of texts) tokens += enc.encode_ordinary(s).length;
    return { ms: now() - t0, tokens };
  },

  /**
   * The editor's path to a complete report, without VS Code: the host's ShardDocument.load() steps —
   * a SourceSession started, then the whole-file analysis (analyzeFile, the worker pool on
   * dist/worker.js with one worker per core up to 4) tallied into a ShardTally — and then kept in a
   * ResultsStore as the host keeps it.
   */
  async editor({ path, schema, store }) {
    const { SourceSession, analyzeFile, defaultWorkerCount, ShardTally, ResultsStore } = api();
    const config = editorConfig(schema);
    const t0 = now();
    const session = new SourceSession(path, { maxLineBytes: config.maxLineBytes, stallSeconds: 10 }, { onInfo() {}, onProgress() {}, onIndexed() {}, onError() {} }, undefined, process.env.SW_BENCH_WORKER);
    await session.start();
    const tally = new ShardTally();
    let recordEntry = new Int32Array(1024).fill(-1);
    await analyzeFile(path, {
      config,
      open: { maxLineBytes: config.maxLineBytes, stallSeconds: 10 },
      workers: defaultWorkerCount(),
      workerScript: process.env.SW_BENCH_WORKER,
      onFileFindings: (fs) => fs.forEach((f) => tally.addFinding(f)),
      onOutcomes: (os) => {
        for (const o of os) {
          tally.add(o);
          if (o.record !== null) {
            if (o.record >= recordEntry.length) {
              let size = recordEntry.length;
              while (size <= o.record) size *= 2;
              const next = new Int32Array(size).fill(-1);
              next.set(recordEntry);
              recordEntry = next;
            }
            recordEntry[o.record] = o.entry;
          }
        }
      },
    });
    const ms = now() - t0;
    const snapshot = tally.snapshot();
    const key = await ResultsStore.keyFor(path, config);
    let last = recordEntry.length;
    while (last > 0 && recordEntry[last - 1] < 0) last--;
    await new ResultsStore(store).put({ key, tally: snapshot, recordEntry: Array.from(recordEntry.subarray(0, last)) });
    session.dispose();
    return { ms, records: tally.records, maxRSSKiB: process.resourceUsage().maxRSS };
  },
  /** The second open: the host's restoreKept() steps — a SourceSession started, the kept results looked up and restored. */
  async 'second-open'({ path, schema, store }) {
    const { SourceSession, ShardTally, ResultsStore } = api();
    const config = editorConfig(schema);
    const t0 = now();
    const session = new SourceSession(path, { maxLineBytes: config.maxLineBytes, stallSeconds: 10 }, { onInfo() {}, onProgress() {}, onIndexed() {}, onError() {} }, undefined, process.env.SW_BENCH_WORKER);
    await session.start();
    const key = await ResultsStore.keyFor(path, config);
    const kept = await new ResultsStore(store).get(key);
    if (!kept) throw new Error('no kept results for the shard');
    const tally = ShardTally.restore(kept.tally);
    Int32Array.from(kept.recordEntry);
    const ms = now() - t0;
    session.dispose();
    return { ms, records: tally.records };
  },

  /** Parquet first page through Shardwise's source: open + 100 rows; bytes read from /proc/self/io after a warm-up on a small file. */
  async parquet({ path, warm }) {
    const { createSource } = api();
    const w = createSource(warm, {});
    await w.open();
    await w.read(0, 10);
    await w.close();
    const r0 = rchar();
    const t0 = now();
    const source = createSource(path, {});
    const info = await source.open();
    const rows = await source.read(0, 100);
    const ms = now() - t0;
    const r1 = rchar();
    await source.close();
    if (rows.length !== 100) throw new Error('first page incomplete');
    return { ms, bytesRead: r0 === null ? null : r1 - r0, size: info.sizeBytes, groups: info.groups?.length ?? null };
  },
  /** The reference: parquet-wasm's ParquetFile over a file-backed Blob, read({offset: 0, limit: 100}). */
  async 'ref-parquet'({ path, warm }) {
    const { openAsBlob } = await import('node:fs');
    const { ParquetFile } = require('parquet-wasm');
    const first = async (p) => {
      const file = await ParquetFile.fromFile(await openAsBlob(p));
      const table = await file.read({ offset: 0, limit: 100 });
      const n = table.numRows ?? 0;
      table.free?.();
      file.free?.();
      return n;
    };
    await first(warm);
    const r0 = rchar();
    const t0 = now();
    const rows = await first(path);
    const ms = now() - t0;
    const r1 = rchar();
    return { ms, rows, bytesRead: r0 === null ? null : r1 - r0 };
  },

  /** Arrow IPC file: open, then 100 rows of batch k (the middle batch) through Shardwise's source. */
  async arrow({ path }) {
    const { createSource } = api();
    const t0 = now();
    const source = createSource(path, {});
    const info = await source.open();
    const openMs = now() - t0;
    const k = Math.floor((info.groups?.length ?? 1) / 2);
    const first = info.groups?.[k]?.firstRow ?? 0;
    const t1 = now();
    const rows = await source.read(first, first + 100);
    const ms = now() - t1;
    await source.close();
    if (rows.length !== 100) throw new Error('batch page incomplete');
    return { ms, openMs, batch: k, batches: info.groups?.length ?? null };
  },
  /** The reference: apache-arrow's file reader over a file handle, readRecordBatch(k), 100 rows as JSON. */
  async 'ref-arrow'({ path }) {
    const { RecordBatchReader } = require('apache-arrow');
    const { open } = await import('node:fs/promises');
    const t0 = now();
    const fh = await open(path, 'r');
    const reader = await RecordBatchReader.from(fh);
    await reader.open();
    const openMs = now() - t0;
    const k = Math.floor(reader.numRecordBatches / 2);
    const t1 = now();
    const batch = await reader.readRecordBatch(k);
    const rows = [];
    for (let i = 0; i < 100; i++) rows.push(batch.get(i).toJSON());
    const ms = now() - t1;
    await reader.cancel?.();
    await fh.close().catch(() => undefined);
    return { ms, openMs, batch: k };
  },
};

/** The configuration the host builds from default settings with one schema mapped to the shard. */
function editorConfig(schema) {
  const { withDefaults } = api();
  return withDefaults(schema ? { schema: { source: schema, schema: JSON.parse(readFileSync(schema, 'utf8')) } } : {});
}

async function oursInWorkers(file, tokenizer, workers) {
  const threads = Array.from({ length: workers }, (_, index) => new Worker(new URL(import.meta.url), { workerData: { file, tokenizer, index, count: workers }, env: process.env }));
  const next = (w) => new Promise((resolve, reject) => {
    w.once('message', resolve);
    w.once('error', reject);
  });
  await Promise.all(threads.map(next)); // loaded
  const t0 = now();
  const done = threads.map(next);
  for (const w of threads) w.postMessage('go');
  const counts = await Promise.all(done);
  const ms = now() - t0;
  await Promise.all(threads.map((w) => w.terminate()));
  return { ms, tokens: counts.reduce((a, b) => a + b, 0) };
}

if (!isMainThread) {
  // A token-counting thread: its share is every `count`-th block of 64 texts.
  const { file, tokenizer, index, count } = workerData;
  const texts = JSON.parse(readFileSync(file, 'utf8')).filter((_, i) => Math.floor(i / 64) % count === index);
  const t = await api().loadTokenizer(tokenizer);
  parentPort.postMessage('ready');
  parentPort.once('message', () => parentPort.postMessage(texts.reduce((n, s) => n + t.count(s), 0)));
} else {
  const [mode, args] = process.argv.slice(2);
  const run = modes[mode];
  if (!run) {
    console.error(`unknown mode ${mode}`);
    process.exit(2);
  }
  try {
    const result = await run(JSON.parse(args ?? '{}'));
    process.stdout.write(`@@result ${JSON.stringify(result)}\n`);
    process.exit(0);
  } catch (e) {
    console.error(e?.stack ?? String(e));
    process.exit(1);
  }
}
