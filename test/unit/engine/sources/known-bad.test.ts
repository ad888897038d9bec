// The known bad files of the golden set (SOURCES.md: "malformed: a clean error, no crash, no
// hang"), through the built CLI as a user runs it: parquet-testing's bad_data/, its encrypted
// files and large_string_map.brotli.parquet, arrow-testing's fuzzing reproducers (file and
// stream), forward-compatibility and big-endian files. Each must give a `read` finding of severity
// error in plain words, exit 1, within a time bound per file (in the CLI's own thread: worker start-up per
// file would dominate; the watchdog over workers has its own test in test/unit/node/watchdog.test.ts).
import { execFile } from 'node:child_process';
import { readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildBundles } from '../../helpers/build';
import { requireTestdata } from './testdata';

/** Files of the folders below that decode cleanly here, each with the reason it is not a failure. */
const READS_CLEANLY: Record<string, string> = {
  // bad_data/README.md: "dictionary index page uses rle encoding but 0 as rle bit-width"; a bit
  // width of 0 is legal for a one-entry dictionary (every index is 0; from memory of the RLE/bit-packing
  // hybrid encoding), and parquet-wasm reads it.
  'ARROW-GH-43605.parquet': 'bit width 0 is legal',
  // Decodes to 200 rows of nested lists with apache-arrow; the crash it reproduces is in Arrow
  // C++'s own validation, which this data passes here. Kept visible rather than forced to fail.
  'clusterfuzz-testcase-minimized-arrow-ipc-file-fuzz-6088759971217408': 'decodes in apache-arrow',
};

// Messages of the JavaScript engine and WebAssembly traps must never reach a finding.
const INTERNAL = /Cannot read propert|is not a function|Invalid typed array length|Maximum call stack|undefined|RuntimeError|unreachable|out of bounds/;

let cli = '';
beforeAll(() => {
  cli = join(buildBundles(), 'cli.js');
});

interface Report {
  files: { path: string; findings: { rule: string; family: string; severity: string; message: string }[] }[];
}

function check(files: string[]): Promise<{ code: number | null; report: Report; ms: number; stderr: string }> {
  const t = Date.now();
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [cli, 'check', ...files, '--format', 'json', '--quiet', '--in-thread'],
      { encoding: 'utf8', timeout: 20_000 * files.length, maxBuffer: 1 << 28 },
      (err, stdout, stderr) => {
        const code = err ? ((err as { code?: number }).code ?? null) : 0;
        resolve({ code: typeof code === 'number' ? code : null, report: stdout ? (JSON.parse(stdout) as Report) : { files: [] }, ms: Date.now() - t, stderr });
      },
    );
  });
}

const grouped: string[] = [];
function group(name: string, files: string[]): void {
  grouped.push(...files);
  describe(name, () => {
    it(`${files.length} files: each a read error in plain words, exit 1, under 10 s a file`, async () => {
      const { code, report, ms, stderr } = await check(files);
      expect(stderr).toBe('');
      expect(code).toBe(1);
      expect(ms).toBeLessThan(10_000 * files.length);
      expect(report.files.map((f) => f.path)).toEqual(files);
      for (const f of report.files) {
        const base = f.path.split('/').pop()!;
        const errors = f.findings.filter((x) => x.family === 'read' && x.severity === 'error');
        for (const x of f.findings) expect(x.message, `${base}: ${x.message}`).not.toMatch(INTERNAL);
        if (READS_CLEANLY[base]) expect(errors, `${base} now fails: drop it from READS_CLEANLY`).toEqual([]);
        else expect(errors.length, `${base} gave no read error: ${JSON.stringify(f.findings.slice(0, 2))}`).toBeGreaterThan(0);
        for (const x of errors) expect(x.message.length).toBeGreaterThan(15);
      }
    });
  });
}

const parquet = requireTestdata('parquet');
const arrow = requireTestdata('arrow');
const files = (d: string, keep: (n: string) => boolean) =>
  readdirSync(d)
    .filter((n) => keep(n) && statSync(join(d, n)).isFile())
    .sort()
    .map((n) => join(d, n));

group('parquet-testing bad_data/', files(join(parquet, 'bad_data'), (n) => n.endsWith('.parquet')));
group('parquet-testing encrypted files and the 2 GB string map', [
  ...files(parquet, (n) => n.endsWith('.parquet.encrypted')),
  join(parquet, 'large_string_map.brotli.parquet'),
]);
group('arrow-testing fuzz reproducers, IPC file', files(join(arrow, 'fuzz-crashes'), (n) => n.startsWith('clusterfuzz')));
group('arrow-testing fuzz reproducers, IPC stream', files(join(arrow, 'ipc-stream'), (n) => n.startsWith('clusterfuzz')));
group('arrow-testing forward compatibility and big-endian files', [
  ...files(join(arrow, 'forward-compatibility'), (n) => n.endsWith('.arrow')),
  ...files(join(arrow, 'ipc-stream/integration/1.0.0-bigendian'), (n) => n.endsWith('.arrow_file') || n.endsWith('.stream')),
]);

it('every file said to read cleanly is one of the files above, so its expectation is checked', () => {
  const names = new Set(grouped.map((f) => f.split('/').pop()!));
  for (const name of Object.keys(READS_CLEANLY)) expect(names.has(name), name).toBe(true);
});
