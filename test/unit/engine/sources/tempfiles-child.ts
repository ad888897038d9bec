// A process that holds a decompressed copy open, for the temporary-file test: it indexes the
// gzip shard named on its command line, prints the copy's folder, then waits to be signalled.
import { readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { JsonlSource } from '../../../../src/engine/sources/jsonl';
import { installTempCleanup } from '../../../../src/engine/sources/tempFiles';

async function main(): Promise<void> {
  const [mode, shard] = process.argv.slice(2);
  if (mode === 'sweep') {
    installTempCleanup();
    process.stdout.write('SWEPT\n');
    return;
  }
  const s = new JsonlSource(shard, { compression: 'gzip' });
  await s.index();
  const mine = readdirSync(tmpdir()).filter((n) => n.startsWith(`shardwise-${process.pid}-`));
  process.stdout.write(`READY ${mine.join(',')}\n`);
  setInterval(() => undefined, 1000);
}
void main();
