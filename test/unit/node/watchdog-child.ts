// Child process for the in-thread watchdog test: `spin` blocks this thread for good after making a
// temporary folder; `beat` keeps working (and beating) for a while, then ends normally.
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { TEMP_PREFIX } from '../../../src/engine/sources/tempFiles';
import { watchThisThread } from '../../../src/node/threadWatchdog';

const mode = process.argv[2];
const dog = watchThisThread(1, 'a-shard.jsonl');
if (mode === 'spin') {
  const dir = mkdtempSync(join(tmpdir(), `${TEMP_PREFIX}${process.pid}-jsonl-`));
  process.stdout.write(`${dir}\n`);
  for (;;) {
    // A reader stuck in a synchronous loop.
  }
} else {
  const end = Date.now() + 2500;
  while (Date.now() < end) {
    const until = Date.now() + 200;
    while (Date.now() < until) {
      // Slow but progressing work.
    }
    dog.beat();
  }
  dog.stop();
  process.stdout.write('finished\n');
}
