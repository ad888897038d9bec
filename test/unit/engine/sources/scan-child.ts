// Scans the JSON Lines shard named on the command line and prints how many entries and findings it
// read: run under a small heap by hostile.test.ts, to prove a scan's memory does not grow with the file.
import { JsonlSource } from '../../../../src/engine/sources/jsonl';

async function main(): Promise<void> {
  const s = new JsonlSource(process.argv[2]);
  let entries = 0;
  let findings = 0;
  for await (const e of s.scan()) {
    entries++;
    findings += e.findings.length;
  }
  await s.close();
  process.stdout.write(`${entries} ${findings}\n`);
}
void main();
