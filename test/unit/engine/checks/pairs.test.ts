// One test per preference-pair rule. The prompt/chosen/rejected layout, and its variant where
// chosen and rejected are whole conversations repeating the prompt turns, are common practice.

import { describe, expect, it } from 'vitest';
import { PAIR_RULES, pairCheck, promptTurnCount } from '../../../../src/engine/checks/pairs.js';
import { readRecord } from '../../../../src/engine/layouts/index.js';
import type { RecordIssue } from '../../../../src/engine/findings.js';
import { DEFAULT_CONFIG } from '../../../../src/engine/config.js';

function run(value: unknown): RecordIssue[] {
  const out = { issues: [] as RecordIssue[] };
  pairCheck.checkRecord({ record: 0, value }, DEFAULT_CONFIG, out);
  return out.issues;
}
const rules = (value: unknown) => run(value).map((i) => i.rule);
const u = (content: string) => ({ role: 'user', content });
const a = (content: string) => ({ role: 'assistant', content });

describe('pair rules', () => {
  it('lists each rule once, and every rule it lists is raised by some record (none is dead, none unlisted)', () => {
    const ids = PAIR_RULES.map((r) => r.id);
    expect(new Set(ids).size).toBe(ids.length);
    const raised = new Set(
      [
        { prompt: 'Q', chosen: 'A' },
        { prompt: 'Q', chosen: '  ', rejected: 'B' },
        { prompt: 'Q', chosen: 'same', rejected: 'same' },
        { chosen: [u('Q1'), a('A')], rejected: [u('Q2'), a('B')] },
      ].flatMap(rules),
    );
    expect([...raised].sort()).toEqual([...ids].sort());
  });

  it('well-formed pairs have no issues, in both layouts', () => {
    expect(run({ prompt: 'How tight should a stem bolt be?', chosen: 'Use the torque printed on the stem, often 5 Nm.', rejected: 'As tight as you can.' })).toEqual([]);
    expect(
      run({
        chosen: [u('Tyre pressure for gravel?'), a('Lower than road, around 2.5 bar.')],
        rejected: [u('Tyre pressure for gravel?'), a('Always 8 bar.')],
      }),
    ).toEqual([]);
    expect(run({ prompt: [u('Q')], chosen: [a('good')], rejected: [a('bad')] })).toEqual([]);
  });

  it('ignores records that are not pairs', () => {
    expect(run({ messages: [u('a'), a('b')] })).toEqual([]);
    expect(run({ prompt: 'only a prompt' })).toEqual([]);
  });

  it('pair-side-missing: rejected, chosen, and a prompt nobody carries', () => {
    expect(run({ prompt: 'Q', chosen: 'A' })).toMatchObject([{ rule: 'pair-side-missing', pointer: '' }]);
    expect(run({ prompt: 'Q', chosen: 'A' })[0].message).toContain('"rejected"');
    expect(rules({ prompt: 'Q', rejected: 'B' })).toEqual(['pair-side-missing']);
    expect(rules({ chosen: 'A', rejected: 'B' })).toEqual(['pair-side-missing']);
    // Answer-only turn lists do not carry the prompt either.
    expect(rules({ chosen: [a('A')], rejected: [a('B')] })).toEqual(['pair-side-missing']);
  });

  it('pair-side-empty: blank text, empty list, not text', () => {
    expect(run({ prompt: 'Q', chosen: '  ', rejected: 'B' })).toMatchObject([{ rule: 'pair-side-empty', pointer: '/chosen' }]);
    expect(run({ prompt: '', chosen: 'A', rejected: 'B' })).toMatchObject([{ rule: 'pair-side-empty', pointer: '/prompt' }]);
    expect(run({ prompt: 'Q', chosen: 'A', rejected: [] })).toMatchObject([{ rule: 'pair-side-empty', pointer: '/rejected' }]);
    expect(run({ prompt: 'Q', chosen: 12, rejected: 'B' })[0].message).toBe('"chosen" is a number, not text or a list of turns');
  });

  it('pair-identical: same text after white-space normalisation', () => {
    expect(run({ prompt: 'Q', chosen: 'Re-index the  gears.', rejected: ' Re-index the gears.\n' })).toMatchObject([{ rule: 'pair-identical', pointer: '/rejected' }]);
    expect(rules({ prompt: 'Q', chosen: 'Re-index the gears.', rejected: 'Re-index the brakes.' })).toEqual([]);
  });

  it('pair-identical: same turns, and text against a final turn', () => {
    expect(rules({ chosen: [u('Q'), a('same')], rejected: [u('Q'), a('same')] })).toEqual(['pair-identical']);
    expect(rules({ prompt: 'Q', chosen: 'same', rejected: [a('same')] })).toEqual(['pair-identical']);
    // Different tool calls with equal (empty) text are different answers.
    const call = (name: string) => ({ role: 'assistant', content: null, tool_calls: [{ id: 'c', type: 'function', function: { name, arguments: '{}' } }] });
    expect(rules({ chosen: [u('Q'), call('book_repair')], rejected: [u('Q'), call('cancel_repair')] })).toEqual([]);
  });

  it('pair-prompt-mismatch: different prompt turns, or a different number of them', () => {
    expect(run({ chosen: [u('Q1'), a('A')], rejected: [u('Q2'), a('B')] })).toMatchObject([{ rule: 'pair-prompt-mismatch', pointer: '/rejected/0' }]);
    const system = { role: 'system', content: 'co-op helper' };
    expect(run({ chosen: [system, u('Q'), a('A')], rejected: [u('Q'), a('B')] })).toMatchObject([{ rule: 'pair-prompt-mismatch', pointer: '/rejected' }]);
    // A longer answer with tool turns after the last user turn shares the prompt.
    expect(
      rules({
        chosen: [u('Q'), { role: 'assistant', content: null, tool_calls: [{ id: 'x' }] }, { role: 'tool', tool_call_id: 'x', content: 'r' }, a('A')],
        rejected: [u('Q'), a('B')],
      }),
    ).toEqual([]);
  });

  it('promptTurnCount counts up to the last user turn', () => {
    const pair = readRecord({ chosen: [u('a'), a('b'), u('c'), a('d')], rejected: 'x' }, DEFAULT_CONFIG)!.pair!;
    expect(promptTurnCount(pair.chosen.turns!)).toBe(3);
  });
});
