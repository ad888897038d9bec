// Which editor a file opens in: the record view for shards, the text editor for small JSON Lines
// files unless a setting or the person says otherwise.
import { describe, expect, it } from 'vitest';
import { openChoice } from '../../../src/host/openChoice';

const MiB = 1024 * 1024;
const base = { mode: 'large' as const, largeBytes: 8 * MiB, explicit: false };

describe('openChoice', () => {
  it('Parquet, Arrow and compressed shards always open in the record view', () => {
    for (const fileName of ['a.parquet', 'a.arrow', 'a.jsonl.gz', 'a.jsonl.zst', 'a.json.gz']) {
      expect(openChoice({ ...base, fileName, sizeBytes: 10, mode: 'never' }), fileName).toBe('record');
    }
  });
  it('JSON Lines: large files in the record view, small ones in the text editor', () => {
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: 8 * MiB })).toBe('record');
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: 8 * MiB - 1 })).toBe('text');
    expect(openChoice({ ...base, fileName: 'chats.NDJSON', sizeBytes: 100 })).toBe('text');
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: null })).toBe('record');
  });
  it('the setting and an explicit request decide over the size', () => {
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: 100, mode: 'always' })).toBe('record');
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: 100 * MiB, mode: 'never' })).toBe('text');
    expect(openChoice({ ...base, fileName: 'chats.jsonl', sizeBytes: 100, mode: 'never', explicit: true })).toBe('record');
  });
});
