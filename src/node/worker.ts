// Worker-thread entry: runs whole-file analysis shares and serves a record view's reads,
// so the extension host's main thread never parses, indexes or tokenizes.

import { stat } from 'node:fs/promises';
import { parentPort } from 'node:worker_threads';
import { analyzeSource, type EntryOutcome } from '../engine/analyze.js';
import { CancelledError, errorKind } from '../engine/errors.js';
import { FactGatherer } from '../engine/query.js';
import { ALL_CHECKS } from '../engine/checks/index.js';
import { renderedRecord, turnTokenCounts } from '../engine/tokens/recordTokens.js';
import { loadTokenizer, tokenizerOf } from '../engine/tokens/index.js';
import { createSource, type OpenOptions } from '../engine/sources/index.js';
import type { RecordSource } from '../engine/sources/source.js';
import type { WorkerEvent, WorkerRequest } from './messages.js';
import { wasmFaults, wasmMemoryBytes } from '../engine/sources/parquet.js';

const port = parentPort;
if (!port) throw new Error('worker.ts must run in a worker thread');

const running = new Map<number, AbortController>();
let session: RecordSource | null = null;
/** What the open session reads, so a query can read the same file with a second reader. */
let sessionPath: { path: string; open: OpenOptions } | null = null;
/** The open shard's size, time and identity when it was opened, for sources that cannot extend. */
let sessionStat: { size: number; mtimeMs: number; ino: number; dev: number } | null = null;

/** What changed on disk since the shard was opened, for a source that cannot extend its index. */
async function changeOnDisk(path: string): Promise<'none' | 'shorter' | 'replaced'> {
  const was = sessionStat;
  const st = await stat(path).catch(() => null);
  if (!was || !st || !st.isFile()) return 'replaced';
  if (st.ino !== was.ino || st.dev !== was.dev) return 'replaced';
  if (st.size < was.size) return 'shorter';
  return st.size === was.size && st.mtimeMs === was.mtimeMs ? 'none' : 'replaced';
}

function post(ev: WorkerEvent): void {
  port!.postMessage(ev);
}

function fail(id: number, err: unknown): void {
  const e = err as Error;
  post({ id, kind: 'error', message: e?.message ?? String(err), errorKind: errorKind(err) });
}

port.on('message', (req: WorkerRequest) => {
  void handle(req).catch((err) => fail(req.id, err));
});

async function handle(req: WorkerRequest): Promise<void> {
  switch (req.op) {
    case 'analyze': {
      const ac = new AbortController();
      running.set(req.id, ac);
      const source = createSource(req.path, req.open);
      try {
        const info = await source.open(ac.signal);
        if (req.share.index === 0) post({ id: req.id, kind: 'info', info });
        let batch: EntryOutcome[] = [];
        let last = Date.now();
        const flush = () => {
          if (batch.length) post({ id: req.id, kind: 'outcomes', outcomes: batch });
          batch = [];
          last = Date.now();
        };
        const broke = await analyzeSource(source, {
          config: req.config,
          checks: ALL_CHECKS,
          signal: ac.signal,
          share: req.share,
          onProgress: (progress) => post({ id: req.id, kind: 'progress', progress }),
          onOutcome: (o) => {
            batch.push(o);
            if (batch.length >= 500 || Date.now() - last > 200) flush();
          },
        });
        flush();
        // Findings about the file itself (a corrupt compressed stream, a read that broke off) are
        // known only after the pass; the pool keeps each once.
        if (broke || req.share.index === 0) {
          const after = source.info();
          post({ id: req.id, kind: 'info', info: broke ? { ...after, findings: [...after.findings, broke] } : after });
        }
        post({ id: req.id, kind: 'done' });
      } finally {
        running.delete(req.id);
        await source.close().catch(() => undefined);
      }
      return;
    }
    case 'query': {
      // A whole-shard pass of its own (a second reader of the same file, so pages keep coming),
      // gathering only the facts the query needs.
      if (!sessionPath) throw new Error('no shard is open in this worker');
      const ac = new AbortController();
      running.set(req.id, ac);
      const source = createSource(sessionPath.path, sessionPath.open);
      try {
        await source.open(ac.signal);
        const gather = new FactGatherer(req.needs, req.config, req.entries);
        let lastPost = 0;
        for await (const e of source.scan({
          signal: ac.signal,
          onProgress: (progress) => {
            const now = Date.now();
            if (now - lastPost > 150) {
              lastPost = now;
              post({ id: req.id, kind: 'progress', progress });
            }
          },
        })) {
          if (ac.signal.aborted) throw new CancelledError();
          if (e.entry >= req.entries) break;
          gather.add(e.entry, e.value);
        }
        post({ id: req.id, kind: 'facts', facts: gather.facts });
      } finally {
        running.delete(req.id);
        await source.close().catch(() => undefined);
      }
      return;
    }
    case 'open': {
      const ac = new AbortController();
      running.set(req.id, ac);
      sessionPath = { path: req.path, open: req.open };
      sessionStat = await stat(req.path).then((st) => ({ size: st.size, mtimeMs: st.mtimeMs, ino: st.ino, dev: st.dev })).catch(() => null);
      session = createSource(req.path, req.open);
      let info = await session.open(ac.signal);
      // An index kept from an earlier session of the same bytes spares reading the file again.
      if (req.kept !== undefined && session.importIndex?.(req.kept)) info = session.info();
      post({ id: req.id, kind: 'info', info });
      let lastPost = 0;
      void session
        .index({
          signal: ac.signal,
          onProgress: (progress) => {
            const now = Date.now();
            if (now - lastPost > 100) {
              lastPost = now;
              post({ id: req.id, kind: 'progress', progress });
            }
          },
        })
        .then((final) => {
          post({ id: req.id, kind: 'info', info: final });
          post({ id: req.id, kind: 'done' });
        })
        .catch((err) => fail(req.id, err))
        .finally(() => running.delete(req.id));
      return;
    }
    case 'read': {
      if (!session) throw new Error('no shard is open in this worker');
      const entries = await session.read(req.start, req.end, { columns: req.columns });
      post({ id: req.id, kind: 'entries', entries });
      return;
    }
    case 'turnTokens': {
      await loadTokenizer(tokenizerOf(req.config));
      post({ id: req.id, kind: 'turnTokens', turns: turnTokenCounts(req.value, req.config) });
      return;
    }
    case 'rendered': {
      await loadTokenizer(tokenizerOf(req.config));
      post({ id: req.id, kind: 'rendered', rendered: renderedRecord(req.value, req.config) });
      return;
    }
    case 'cancel': {
      running.get(req.target)?.abort();
      return;
    }
    case 'exportIndex': {
      post({ id: req.id, kind: 'index', index: session?.exportIndex?.() ?? null });
      return;
    }
    case 'extend': {
      // The file changed on disk: a source that can extend its index does; any other is opened again.
      if (!session) throw new Error('no shard is open in this worker');
      const change = session.extend ? await session.extend({ settled: req.settled }) : { change: await changeOnDisk(sessionPath!.path), info: session.info() };
      post({ id: req.id, kind: 'change', change });
      return;
    }
    case 'learn': {
      session?.learnNonRecords?.(req.entries, req.through);
      return;
    }
    case 'memory': {
      post({ id: req.id, kind: 'memory', rss: process.memoryUsage().rss, wasm: wasmMemoryBytes(), faults: wasmFaults() });
      return;
    }
  }
}

