// A new context length needs no re-tokenising: the over-context findings and counts made from the
// kept per-record counts equal those of a whole new check at that length (the engine's own analysis,
// run in this thread, as the reference), and making them reaches no tokenizer.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it, vi, type MockInstance } from 'vitest';
import { withDefaults, type CheckConfig } from '../../../src/engine/config';
import type { EntryOutcome } from '../../../src/engine/analyze';
import type { Finding } from '../../../src/engine/findings';
import { ShardTally } from '../../../src/engine/stats/tally';
import { analyzeInThread } from '../../../src/node/inThread';
import { tokensCheck } from '../../../src/engine/checks/tokens';
import { onlyContextLengthChanged, recontext, recordsNeedingPlaces, type RecordPlace } from '../../../src/host/recontext';

const dir = mkdtempSync(join(tmpdir(), 'shardwise-recontext-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// Chats and pairs of many lengths (a pair's length is its longest sequence), a blank and a broken line.
const lines: string[] = [];
for (let i = 0; i < 120; i++) {
  const words = 'spoke nipple truing stand derailleur hanger '.repeat(1 + ((i * 37) % 90));
  if (i % 5 === 0) lines.push(JSON.stringify({ id: `p${i}`, prompt: 'Which chain?', chosen: words, rejected: 'Any.' }));
  else lines.push(JSON.stringify({ id: `c${i}`, messages: [{ role: 'user', content: `Question ${i}` }, { role: 'assistant', content: words }] }));
  if (i === 40) lines.push('');
  if (i === 70) lines.push('{"id": "broken", ');
}
const file = join(dir, 'mixed.jsonl');
writeFileSync(file, lines.join('\n') + '\n');

async function check(config: CheckConfig): Promise<{ tally: ShardTally; entries: Map<number, number> }> {
  const tally = new ShardTally();
  const entries = new Map<number, number>();
  await analyzeInThread(file, {
    config,
    open: { maxLineBytes: config.maxLineBytes },
    workers: 0,
    onFileFindings: (fs: Finding[]) => fs.forEach((f) => tally.addFinding(f)),
    onOutcomes: (os: EntryOutcome[]) => os.forEach((o) => { tally.add(o); if (o.record !== null) entries.set(o.record, o.entry); }),
  } as never);
  return { tally, entries };
}

const overContext = (fs: Finding[]) => fs.filter((f) => f.rule.endsWith('over-context')).map((f) => ({ rule: f.rule, record: f.record, line: f.line, column: f.column, entry: f.entry, severity: f.severity, message: f.message })).sort((a, b) => a.record! - b.record!);

describe('a new context length from the kept counts', () => {
  for (const [from, to] of [[120, 60], [60, 200], [200, 40]] as const) {
    it(`gives what a new check gives (${from} → ${to} tokens)`, async () => {
      const before = await check(withDefaults({ contextLength: from }));
      const reference = await check(withDefaults({ contextLength: to }));
      const snap = before.tally.snapshot();
      // Places of the records newly over, as the host reads them from the shard's index: the line, and column 1 (a record starts its line).
      const places = new Map<number, RecordPlace>();
      for (const r of recordsNeedingPlaces(snap, to)) {
        const entry = before.entries.get(r)!;
        places.set(r, { entry, line: entry + 1, column: 1 });
      }
      // No tokenizer may be reached while the findings are made again: neither the module that
      // hands tokenizers out nor the tokenizer the checks above loaded and counted with.
      const tokens = await import('../../../src/engine/tokens/index');
      const loaded = tokens.getTokenizer(withDefaults());
      const spies = [
        ...Object.keys(tokens).filter((k) => typeof (tokens as Record<string, unknown>)[k] === 'function').map((k) => vi.spyOn(tokens as never, k as never)),
        ...(['count', 'encode', 'countRendered', 'encodeRendered'] as const).map((m) => vi.spyOn(loaded, m)),
      ] as MockInstance[];
      let next: ReturnType<typeof recontext>;
      try {
        next = recontext(snap, to, places, { tokenizer: 'cl100k_base', rendered: false });
        for (const s of spies) expect(s).not.toHaveBeenCalled();
        // The spies do see a record counted the way a check counts it.
        tokensCheck.checkRecord({ record: 0, value: { text: 'true the wheel' } }, withDefaults({ contextLength: to }), { issues: [] });
        expect(spies.some((s) => s.mock.calls.length > 0)).toBe(true);
      } finally {
        for (const s of spies) s.mockRestore();
      }
      expect(next).not.toBeNull();
      const again = ShardTally.restore(next!);
      // A record newly over the length whose longest sequence is one of several (a pair's prompt +
      // chosen or prompt + rejected) is named without that sequence: which one it was is not kept.
      const newly = new Set(places.keys());
      const want = overContext(reference.tally.sortedFindings()).map((f) => (newly.has(f.record!) ? { ...f, message: f.message.replace(/ in its longest sequence \([^)]*\)/, '') } : f));
      expect(overContext(again.sortedFindings())).toEqual(want);
      expect(again.totalFindings).toBe(reference.tally.totalFindings);
      expect(again.bySeverity).toEqual(reference.tally.bySeverity);
      expect(new Map(again.byRule)).toEqual(new Map(reference.tally.byRule));
      expect(again.tokenSummary('cl100k_base', to)).toEqual(reference.tally.tokenSummary('cl100k_base', to));
      expect(overContext(again.sortedFindings()).length).toBeGreaterThan(0);
    });
  }

  it('is taken only when the context length alone changed', () => {
    const a = withDefaults({ contextLength: 100 });
    expect(onlyContextLengthChanged(a, withDefaults({ contextLength: 50 }))).toBe(true);
    expect(onlyContextLengthChanged(a, withDefaults({ contextLength: 100 }))).toBe(false);
    expect(onlyContextLengthChanged(a, withDefaults({ contextLength: 50, encoding: 'o200k_base' }))).toBe(false);
  });

  it('declines when findings past the cap were counted but not kept', async () => {
    const t = new ShardTally(3);
    for (let i = 0; i < 10; i++) t.add({ entry: i, record: i, tokens: 10, length: 10, kind: 'record', findings: [{ rule: 'chat-role-repeated', family: 'chat', severity: 'warning', message: 'm', record: i, line: i + 1, column: 1, pointer: '', entry: i }] } as never);
    expect(recontext(t.snapshot(), 5, new Map(), { tokenizer: 'cl100k_base', rendered: false })).toBeNull();
  });
});
