import { readdirSync, readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readAll, tempDir, writeShard } from './jsonl-helpers.js';

const projectRoot = resolve(__dirname, '../../../..');
// Golden files: nst/JSONTestSuite test_parsing/ (MIT), see ../shared/testdata/SOURCES.md.
const suiteDir = resolve(projectRoot, '../shared/testdata/json-parsing');

const tmp = tempDir();
afterAll(() => tmp.cleanup());

/** Suite files that fit on one JSONL line: no 0x0A or 0x0D byte. */
function oneLineCases(prefix: string): Array<[string, Buffer]> {
  // readdirSync throws when the folder is missing: the test fails rather than skips.
  return readdirSync(suiteDir)
    .filter((f) => f.startsWith(prefix) && f.endsWith('.json'))
    .sort()
    .map((f) => [f, readFileSync(resolve(suiteDir, f))] as [string, Buffer])
    .filter(([, b]) => !b.includes(0x0a) && !b.includes(0x0d));
}

async function asShard(name: string, bytes: Buffer) {
  return readAll(writeShard(tmp.dir, `${name}.jsonl`, bytes));
}

describe('JSONTestSuite through the JSONL source (nst/JSONTestSuite, RFC 8259)', () => {
  it('every one-line y_ file is exactly one record with no json finding', async () => {
    const cases = oneLineCases('y_');
    expect(cases.length).toBeGreaterThan(80);
    const wrong: string[] = [];
    const warned: string[] = [];
    for (const [f, b] of cases) {
      const { entries, info } = await asShard(f, b);
      const records = entries.filter((e) => e.record !== null).length;
      const found = entries.flatMap((e) => e.findings).filter((x) => x.family === 'json');
      // JSONTestSuite: y_ content must parse, so no finding that says "not a value". Our own
      // json-family warnings (duplicate names, unsafe integers: RFC 8259 SHOULDs) and
      // record-not-object (a y_ scalar is still a record) are allowed and printed.
      const rejecting = found.filter((x) => x.severity === 'error' && x.rule !== 'record-not-object');
      found.filter((x) => x.severity !== 'error').forEach((x) => warned.push(`${f}: ${x.rule}`));
      if (info.entries !== 1 || records !== 1 || rejecting.length) wrong.push(`${f}: ${info.entries} entries, ${records} records, ${rejecting.map((x) => x.rule)}`);
    }
    console.log(`y_ through the source: ${cases.length - wrong.length}/${cases.length} one-record shards; warnings: ${warned.join('; ')}`);
    expect(wrong).toEqual([]);
  });

  it('every non-empty one-line n_ file gives a json or encoding finding; an empty one is an empty shard', async () => {
    const cases = oneLineCases('n_');
    expect(cases.length).toBeGreaterThan(150);
    const wrong: string[] = [];
    const encodingOnly: string[] = [];
    let flagged = 0;
    for (const [f, b] of cases) {
      const { entries, info } = await asShard(f, b);
      if (b.length === 0) {
        if (info.entries !== 0) wrong.push(`${f}: empty file gave ${info.entries} entries`);
        continue;
      }
      const fams = new Set(entries.flatMap((e) => e.findings).map((x) => x.family));
      // JSONTestSuite: n_ content must be rejected.
      if (fams.has('json')) flagged++;
      else if (fams.has('encoding')) {
        flagged++;
        encodingOnly.push(f);
      } else wrong.push(`${f}: no json or encoding finding`);
    }
    console.log(`n_ through the source: ${flagged} flagged; only an encoding finding: ${encodingOnly.join(', ') || 'none'}`);
    expect(wrong).toEqual([]);
  });

  it('i_ files do not crash; prints what the source decides', async () => {
    const lines: string[] = [];
    for (const [f, b] of oneLineCases('i_')) {
      const { entries } = await asShard(f, b);
      const e = entries[0];
      lines.push(`${f}: ${e?.record !== null && e ? 'record' : 'no record'}${e?.findings.length ? ` [${e.findings.map((x) => x.rule).join(', ')}]` : ''}`);
    }
    console.log(lines.join('\n'));
    expect(lines.length).toBeGreaterThan(20);
  });
});
