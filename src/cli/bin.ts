// The `shardwise` executable.
import { run } from './main.js';

run(process.argv.slice(2), process.stdout, process.stderr).then(
  (code) => {
    process.exitCode = code;
  },
  (e) => {
    process.stderr.write(`shardwise: internal error: ${(e as Error).stack ?? e}\n`);
    process.exitCode = 2;
  },
);
