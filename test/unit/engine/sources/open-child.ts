// Opens the JSON Lines shard named on its command line and prints what came of it as one JSON
// line: run by jsonl.test.ts as an unprivileged user, so that the kernel refuses the read.
import { JsonlSource } from '../../../../src/engine/sources/jsonl';

async function main(): Promise<void> {
  const s = new JsonlSource(process.argv[2]!);
  try {
    const info = await s.open();
    process.stdout.write(`${JSON.stringify({ opened: true, sizeBytes: info.sizeBytes })}\n`);
  } catch (e) {
    process.stdout.write(`${JSON.stringify({ opened: false, message: (e as Error).message })}\n`);
  } finally {
    await s.close();
  }
}
void main();
