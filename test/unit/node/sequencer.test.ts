// The pool's sequencer: outcomes of round-robin shares arriving in any interleaving come out in
// entry order with records numbered as a single in-order pass numbers them (the oracle here).
import { describe, expect, it } from 'vitest';
import type { EntryOutcome } from '../../../src/engine/analyze';
import { OutcomeSequencer } from '../../../src/node/sequencer';
import { mulberry32 } from '../helpers/random';

function outcome(entry: number, isRecord: boolean): EntryOutcome {
  return {
    entry,
    record: isRecord ? 10 ** 6 + entry : null,
    tokens: null,
    kind: isRecord ? 'record' : 'invalid',
    findings: isRecord ? [{ rule: 'x', family: 'schema', severity: 'error', message: 'm', record: 10 ** 6 + entry, line: entry + 1, column: 1, pointer: '', entry }] : [],
  };
}

describe('OutcomeSequencer', () => {
  it('any arrival order of the shares gives entry order and in-order record numbers', () => {
    const rnd = mulberry32(21);
    for (const [count, block, entries] of [[2, 256, 5000], [3, 7, 1000], [4, 1, 333]] as const) {
      const holds = Array.from({ length: entries }, () => rnd() > 0.1);
      const shares: EntryOutcome[][] = Array.from({ length: count }, () => []);
      for (let e = 0; e < entries; e++) shares[Math.floor(e / block) % count].push(outcome(e, holds[e]));
      const got: EntryOutcome[] = [];
      const seq = new OutcomeSequencer(count, block, (os) => got.push(...os));
      const pos = new Array<number>(count).fill(0);
      while (pos.some((p, i) => p < shares[i].length)) {
        const i = Math.floor(rnd() * count);
        const n = Math.floor(rnd() * 40);
        seq.push(i, shares[i].slice(pos[i], pos[i] + n));
        pos[i] += n;
      }
      for (let i = 0; i < count; i++) seq.finish(i);
      expect(got.map((o) => o.entry)).toEqual(Array.from({ length: entries }, (_, e) => e));
      let r = 0;
      for (const o of got) {
        const want = holds[o.entry] ? r++ : null;
        expect(o.record).toBe(want);
        for (const f of o.findings) expect(f.record).toBe(want);
      }
      expect(seq.waiting).toBe(0);
    }
  });

  it('while draining, nothing passes a share that may still send a smaller entry', () => {
    const got: number[] = [];
    const seq = new OutcomeSequencer(3, 2, (os) => got.push(...os.map((o) => o.entry)));
    seq.push(0, [outcome(0, true)]);
    seq.finish(0);
    // Share 0 stopped after entry 0: entries 1, 6, 7 will never come. Share 1 runs ahead of share 2.
    seq.push(1, [outcome(2, true), outcome(3, true), outcome(8, true)]);
    expect(got).toEqual([0]);
    seq.push(2, [outcome(4, true), outcome(5, true)]);
    expect(got).toEqual([0, 2, 3, 4, 5]);
    seq.finish(2);
    expect(got).toEqual([0, 2, 3, 4, 5, 8]);
    seq.finish(1);
    expect(got).toEqual([0, 2, 3, 4, 5, 8]);
  });

  it('a share that stops early lets the others drain in entry order', () => {
    const got: number[] = [];
    const seq = new OutcomeSequencer(2, 2, (os) => got.push(...os.map((o) => o.entry)));
    seq.push(1, [outcome(2, true), outcome(3, true), outcome(6, true)]);
    seq.push(0, [outcome(0, true), outcome(1, true)]);
    expect(got).toEqual([0, 1, 2, 3]);
    seq.finish(0);
    expect(got).toEqual([0, 1, 2, 3, 6]);
  });
});
