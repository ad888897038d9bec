// The rooms of the code and what each may import — checked before every build, so that an import
// across a wall fails the build (`npm run build`) instead of waiting for a review. The TypeScript
// projects (`tsc -b`) enforce the libraries of each room (no DOM in the engine, no Node in the
// webviews, `vscode` only in the host); this enforces the import graph, including what the
// compiler cannot see: the webviews reaching past `protocol.ts`, a room importing another's files.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
export const src = join(root, 'src');

/** room → rooms it may import from, and whether it may import packages, `node:` built-ins and `vscode`. */
export const ROOMS = {
  engine: { rooms: ['engine'], packages: true, node: true, vscode: false },
  node: { rooms: ['node', 'engine'], packages: true, node: true, vscode: false },
  cli: { rooms: ['cli', 'engine', 'node'], packages: true, node: true, vscode: false },
  host: { rooms: ['host', 'engine', 'node', 'protocol'], packages: true, node: true, vscode: true },
  webview: { rooms: ['webview', 'protocol'], packages: false, node: false, vscode: false },
  protocol: { rooms: ['protocol', 'engine'], packages: false, node: false, vscode: false, typesOnly: true },
};

function roomOf(file) {
  const rel = relative(src, file).split(sep);
  if (rel.length === 1 && rel[0] === 'protocol.ts') return 'protocol';
  return ROOMS[rel[0]] ? rel[0] : null;
}

function files(dir) {
  return readdirSync(dir).flatMap((n) => {
    const p = join(dir, n);
    return statSync(p).isDirectory() ? files(p) : p.endsWith('.ts') ? [p] : [];
  });
}

const IMPORT = /(?:^|[\s;])(import|export)\s+(type\s+)?(?:[^'";]*?\s+from\s+)?['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/gm;

/** Every import that breaks a wall; `sources` defaults to every file under src/ ({ file, text }). */
export function wallBreaks(sources = files(src).map((file) => ({ file, text: readFileSync(file, 'utf8') }))) {
  const out = [];
  for (const { file, text: raw } of sources) {
    const room = roomOf(file);
    if (!room) continue;
    const rule = ROOMS[room];
    const text = raw.replace(/\/\*[\s\S]*?\*\//g, '').replace(/^\s*\/\/.*$/gm, '');
    for (const m of text.matchAll(IMPORT)) {
      const spec = m[3] ?? m[4];
      const typeOnly = Boolean(m[2]);
      const where = `${relative(root, file)}: import '${spec}'`;
      if (spec.startsWith('.')) {
        const target = resolve(dirname(file), spec.replace(/\.js$/, '.ts'));
        const to = roomOf(target);
        if (!to || !rule.rooms.includes(to)) out.push(`${where} — the ${room} room may import only from ${rule.rooms.join(', ')}`);
        else if (rule.typesOnly && to !== room && !typeOnly) out.push(`${where} — ${room} imports types only`);
      } else if (spec === 'vscode') {
        if (!rule.vscode) out.push(`${where} — only the host room uses the VS Code API`);
      } else if (spec.startsWith('node:')) {
        if (!rule.node) out.push(`${where} — the ${room} room runs without Node`);
      } else if (!rule.packages) out.push(`${where} — the ${room} room imports no packages`);
    }
  }
  return out;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const breaks = wallBreaks();
  if (breaks.length) {
    console.error(`Imports across the rooms' walls (see DEVELOPERS.md):\n  ${breaks.join('\n  ')}`);
    process.exit(1);
  }
}
