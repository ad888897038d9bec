// The rooms' walls: the import graph every build checks (scripts/rooms.mjs) and the TypeScript
// projects that give each room its libraries. Both are shown to fail on a file that breaks them.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
// @ts-expect-error a plain ES module of the build, without types
import { wallBreaks, src } from '../../scripts/rooms.mjs';
import { projectRoot } from './helpers/build';

const probe = (room: string, text: string) => wallBreaks([{ file: join(src, room, 'probe.ts'), text }]) as string[];

describe('the import walls', () => {
  it('the code as it is breaks none', () => {
    expect(wallBreaks()).toEqual([]);
  });
  it('refuses what crosses a wall', () => {
    expect(probe('webview', "import type { Severity } from '../engine/findings.js';")[0]).toMatch(/the webview room may import only from webview, protocol/);
    expect(probe('webview', "import { readFileSync } from 'node:fs';")[0]).toMatch(/runs without Node/);
    expect(probe('engine', "import * as vscode from 'vscode';")[0]).toMatch(/only the host room uses the VS Code API/);
    expect(probe('node', "import { x } from '../host/settings.js';")[0]).toMatch(/the node room may import only from node, engine/);
    expect(probe('engine', "const m = await import('../cli/main.js');")[0]).toMatch(/the engine room may import only from engine/);
    expect(wallBreaks([{ file: join(src, 'protocol.ts'), text: "import { joinPointer } from './engine/findings.js';" }])[0]).toMatch(/imports types only/);
  });
  it('lets each room use what it may', () => {
    expect(probe('webview', "import type { RowView } from '../protocol.js';\nimport { h } from './common.js';")).toEqual([]);
    expect(probe('host', "import * as vscode from 'vscode';\nimport { analyzeFile } from '../node/pool.js';")).toEqual([]);
    // A commented-out import is not an import.
    expect(probe('engine', "// import * as vscode from 'vscode';\n/* import 'vscode' */")).toEqual([]);
  });
});

describe('the TypeScript projects', () => {
  // A probe project that extends a room's own tsconfig (so it has that room's libraries) and
  // compiles one file that uses what the room must not have.
  function compileInRoom(room: string, code: string): { status: number | null; out: string } {
    const dir = mkdtempSync(join(tmpdir(), 'shardwise-room-'));
    try {
      writeFileSync(join(dir, 'probe.ts'), code);
      writeFileSync(
        join(dir, 'tsconfig.json'),
        JSON.stringify({ extends: join(projectRoot, 'src', room, 'tsconfig.json'), compilerOptions: { typeRoots: [join(projectRoot, 'node_modules/@types')], composite: false, noEmit: true, emitDeclarationOnly: false, rootDir: dir, tsBuildInfoFile: null }, include: [], files: [join(dir, 'probe.ts')] }),
      );
      const r = spawnSync(process.execPath, [join(projectRoot, 'node_modules/typescript/bin/tsc'), '-p', join(dir, 'tsconfig.json')], { encoding: 'utf8' });
      return { status: r.status, out: r.stdout + r.stderr };
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
  it('the engine has no DOM', () => {
    const r = compileInRoom('engine', 'export const t = document.title;');
    expect(r.status).not.toBe(0);
    expect(r.out).toMatch(/Cannot find name 'document'/);
  });
  it('the webviews have no Node', () => {
    const r = compileInRoom('webview', "export const b: Buffer = Buffer.from('x');");
    expect(r.status).not.toBe(0);
    expect(r.out).toMatch(/Cannot find name 'Buffer'/);
  });
  it('no room but the host compiles an import of the VS Code API', () => {
    for (const room of ['engine', 'node', 'cli', 'webview']) {
      const r = compileInRoom(room, "import * as vscode from 'vscode';\nexport const v = vscode.version;");
      expect(r.status, room).not.toBe(0);
      expect(r.out, room).toMatch(/vscode\.d\.ts' is not a module/);
    }
    expect(compileInRoom('host', "import * as vscode from 'vscode';\nexport const v = vscode.version;").status).toBe(0);
  });
  it('the same probe compiles where the library belongs (the check can pass)', () => {
    expect(compileInRoom('webview', 'export const t = document.title;').status).toBe(0);
    expect(compileInRoom('engine', "export const b = Buffer.from('x').length;").status).toBe(0);
  });
});
