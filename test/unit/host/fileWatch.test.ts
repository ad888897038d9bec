// Following an open shard on disk, end to end through the reading worker (the built bundle): a
// watcher's event after an append extends the index and shows the half-written final line as
// incomplete; after the settle time the check is asked for again and the line is an ordinary
// finding; a truncated or replaced file asks for opening again with the view's sentence. The
// expected entries come from the bytes written in the test (split on 0x0A, JSON.parse).

import { appendFileSync, mkdtempSync, renameSync, rmSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { SourceInfo } from '../../../src/engine/sources/source';
import { SourceSession } from '../../../src/node/session';
import { buildBundles } from '../helpers/build';

const watchers: Array<() => void> = [];
vi.mock('vscode', () => ({
  workspace: {
    createFileSystemWatcher: () => {
      const on = (fn: () => void) => {
        watchers.push(fn);
        return { dispose: () => undefined };
      };
      return { onDidChange: on, onDidCreate: on, onDidDelete: on, dispose: () => undefined };
    },
  },
  RelativePattern: class {},
  TabInputCustom: class {},
  Uri: { joinPath: (u: { path: string }, ...p: string[]) => ({ path: [u.path, ...p].join('/') }) },
  window: { tabGroups: { all: [] } },
}));

const { FileFollower, reopenSentence } = await import('../../../src/host/fileWatch');

let worker = '';
let dir = '';
beforeAll(() => {
  worker = join(buildBundles(), 'worker.js');
  dir = mkdtempSync(join(tmpdir(), 'shardwise-follow-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function until(what: () => boolean, ms = 5000): Promise<void> {
  const end = Date.now() + ms;
  while (!what()) {
    if (Date.now() > end) throw new Error('timed out');
    await new Promise((r) => setTimeout(r, 10));
  }
}

async function openSession(path: string): Promise<SourceSession> {
  let indexed = false;
  const s = new SourceSession(path, {}, { onInfo: () => undefined, onProgress: () => undefined, onIndexed: (i) => (indexed ||= i.complete), onError: () => undefined }, undefined, worker);
  await s.start();
  await until(() => indexed);
  return s;
}

function follow(path: string, session: SourceSession) {
  const seen = { grew: [] as SourceInfo[], settled: 0, reopen: [] as string[] };
  watchers.length = 0;
  const f = new FileFollower({ path } as never, path, {
    extend: (settled) => session.extend(settled),
    grew: (info) => seen.grew.push(info),
    settled: () => seen.settled++,
    reopen: (sentence) => seen.reopen.push(sentence),
  }, 60_000, 150);
  const poke = () => watchers.forEach((w) => w());
  return { f, seen, poke };
}

describe('following a shard on disk', () => {
  it('grows, shows the half-written line as incomplete, settles, and re-opens once truncated', async () => {
    const path = join(dir, 'chat.jsonl');
    writeFileSync(path, '{"id":1}\n{"id":2}\n{"id":3}\n{"id":4,');
    const session = await openSession(path);
    const { f, seen, poke } = follow(path, session);
    try {
      appendFileSync(path, ' "text": "the derailleur"}\n{"id":5}\n{"id":6, "te');
      poke();
      await until(() => seen.grew.length > 0);
      const text = '{"id":1}\n{"id":2}\n{"id":3}\n{"id":4, "text": "the derailleur"}\n{"id":5}\n{"id":6, "te';
      const lines = text.split('\n');
      expect(seen.grew.at(-1)!.entries).toBe(lines.length);
      const entries = await session.read(0, lines.length);
      for (let i = 0; i < lines.length - 1; i++) expect(entries[i].value).toEqual(JSON.parse(lines[i]));
      expect(() => JSON.parse(lines.at(-1)!)).toThrow();
      expect(entries.at(-1)!.incomplete).toBe(true);
      expect(entries.at(-1)!.findings.some((x) => x.rule === 'json-syntax')).toBe(false);
      // Nothing more for the settle time: the check is asked for, and the line is a finding again.
      await until(() => seen.settled === 1);
      const [last] = await session.read(lines.length - 1, lines.length);
      expect(last.incomplete).toBeUndefined();
      expect(last.findings.map((x) => x.rule)).toContain('json-syntax');
      expect(seen.reopen).toEqual([]);
      truncateSync(path, 9);
      poke();
      await until(() => seen.reopen.length > 0);
      expect(seen.reopen).toEqual([reopenSentence('shorter')]);
      expect(seen.reopen[0]).toBe('The file changed on disk (it is shorter than before); it was opened again.');
    } finally {
      f.dispose();
      session.dispose();
    }
  });

  it('a file renamed over the open one is opened again', async () => {
    const path = join(dir, 'swap.jsonl');
    writeFileSync(path, '{"id":1}\n');
    const session = await openSession(path);
    const { f, seen, poke } = follow(path, session);
    try {
      writeFileSync(join(dir, 'swap.next'), '{"id":1}\n{"id":2}\n');
      renameSync(join(dir, 'swap.next'), path);
      poke();
      await until(() => seen.reopen.length > 0);
      expect(seen.reopen).toEqual(['The file changed on disk (it was replaced or rewritten); it was opened again.']);
      expect(seen.grew).toEqual([]);
    } finally {
      f.dispose();
      session.dispose();
    }
  });
});
