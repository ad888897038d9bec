// One progress model: a scripted sequence of indexing and checking events, and every presenter's
// text at each step (the record view's header, the panel, the window's progress).
import { describe, expect, it } from 'vitest';
import { headerText, initialProgress, nextProgress, panelText, windowText, type ProgressEvent } from '../../../src/engine/progress';

describe('the progress model', () => {
  it('shows indexing and checking as two phases, each with its own share, and no verdict before the end', () => {
    const script: [ProgressEvent, string | null, string, string, boolean][] = [
      [{ kind: 'indexing', done: 10, total: 100, entries: 1200 }, 'indexing 10%', 'indexing 10% (1,200 lines so far) · checking not started', '10% indexed, 0% checked', false],
      [{ kind: 'checking', done: 5, total: 100, records: 400 }, 'indexing 10%', 'indexing 10% (1,200 lines so far) · checked 5% (400 records so far)', '10% indexed, 5% checked', false],
      [{ kind: 'indexing', done: 75, total: 100, entries: 9000 }, 'indexing 75%', 'indexing 75% (9,000 lines so far) · checked 5% (400 records so far)', '75% indexed, 5% checked', false],
      // A lagging report never moves a share backwards.
      [{ kind: 'indexing', done: 60, total: 100, entries: 8000 }, 'indexing 75%', 'indexing 75% (9,000 lines so far) · checked 5% (400 records so far)', '75% indexed, 5% checked', false],
      [{ kind: 'indexed', entries: 12044 }, null, '12,044 lines · checked 5% (400 records so far)', '5% checked', false],
      [{ kind: 'checking', done: 99, total: 100, records: 12000 }, null, '12,044 lines · checked 99% (12,000 records so far)', '99% checked', false],
      [{ kind: 'checked', records: 12038 }, null, '12,044 lines · checked: 12,038 records', '100% checked', true],
    ];
    let s = initialProgress();
    for (const [ev, header, panel, win, final] of script) {
      s = nextProgress(s, ev);
      expect(headerText(s), JSON.stringify(ev)).toBe(header);
      expect(panelText(s, 'lines'), JSON.stringify(ev)).toEqual({ text: panel, final });
      expect(windowText(s), JSON.stringify(ev)).toBe(win);
    }
  });
  it('a stopped or failed check is never final; a restart starts the check over', () => {
    let s = nextProgress(nextProgress(initialProgress(), { kind: 'indexed', entries: 10 }), { kind: 'checking', done: 1, total: 2, records: 5 });
    expect(panelText(nextProgress(s, { kind: 'check-cancelled' }), 'rows')).toEqual({ text: '10 rows · stopped after 5 records (checked so far)', final: false });
    expect(panelText(nextProgress(s, { kind: 'check-failed' }), 'rows').final).toBe(false);
    s = nextProgress(s, { kind: 'check-restarted' });
    expect(windowText(s)).toBe('0% checked');
  });
});
