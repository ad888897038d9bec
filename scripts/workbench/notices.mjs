// Writes THIRD_PARTY_NOTICES.md from the license files of every package the bundles contain, and
// finds which packages those are by reading the source maps of a development build.
import { existsSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { root } from './paths.mjs';

/** Files copied or built beside the bundles at build time (not visible in source maps): the rank tables come from js-tiktoken. */
export const RUNTIME_COPIES = ['parquet-wasm', '@vscode/codicons', 'js-tiktoken'];

/** Package names whose code appears in the source maps of `distDir` (a development build). */
export function bundledPackages(distDir = join(root, 'dist')) {
  const names = new Set();
  const walk = (dir) => {
    for (const e of readdirSync(dir, { withFileTypes: true })) {
      const p = join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.map')) {
        const map = JSON.parse(readFileSync(p, 'utf8'));
        for (const s of map.sources ?? []) {
          const i = s.lastIndexOf('node_modules/');
          if (i < 0) continue;
          const parts = s.slice(i + 'node_modules/'.length).split('/');
          names.add(parts[0].startsWith('@') ? `${parts[0]}/${parts[1]}` : parts[0]);
        }
      }
    }
  };
  if (existsSync(distDir)) walk(distDir);
  for (const n of RUNTIME_COPIES) names.add(n);
  return [...names].sort();
}

// Short, standard texts for packages that publish no license file (SPDX license list wording).
const MIT_TEXT = `Permission is hereby granted, free of charge, to any person obtaining a copy of this software and
associated documentation files (the "Software"), to deal in the Software without restriction,
including without limitation the rights to use, copy, modify, merge, publish, distribute,
sublicense, and/or sell copies of the Software, and to permit persons to whom the Software is
furnished to do so, subject to the following conditions:

The above copyright notice and this permission notice shall be included in all copies or
substantial portions of the Software.

THE SOFTWARE IS PROVIDED "AS IS", WITHOUT WARRANTY OF ANY KIND, EXPRESS OR IMPLIED, INCLUDING BUT
NOT LIMITED TO THE WARRANTIES OF MERCHANTABILITY, FITNESS FOR A PARTICULAR PURPOSE AND
NONINFRINGEMENT. IN NO EVENT SHALL THE AUTHORS OR COPYRIGHT HOLDERS BE LIABLE FOR ANY CLAIM, DAMAGES
OR OTHER LIABILITY, WHETHER IN AN ACTION OF CONTRACT, TORT OR OTHERWISE, ARISING FROM, OUT OF OR IN
CONNECTION WITH THE SOFTWARE OR THE USE OR OTHER DEALINGS IN THE SOFTWARE.`;
const ISC_TEXT = `Permission to use, copy, modify, and/or distribute this software for any purpose with or without
fee is hereby granted, provided that the above copyright notice and this permission notice appear
in all copies.

THE SOFTWARE IS PROVIDED "AS IS" AND THE AUTHOR DISCLAIMS ALL WARRANTIES WITH REGARD TO THIS
SOFTWARE INCLUDING ALL IMPLIED WARRANTIES OF MERCHANTABILITY AND FITNESS. IN NO EVENT SHALL THE
AUTHOR BE LIABLE FOR ANY SPECIAL, DIRECT, INDIRECT, OR CONSEQUENTIAL DAMAGES OR ANY DAMAGES
WHATSOEVER RESULTING FROM LOSS OF USE, DATA OR PROFITS, WHETHER IN AN ACTION OF CONTRACT,
NEGLIGENCE OR OTHER TORTIOUS ACTION, ARISING OUT OF OR IN CONNECTION WITH THE USE OR PERFORMANCE OF
THIS SOFTWARE.`;

// What a package carries beyond its JavaScript, worth saying next to its license.
const EXTRA = {
  'parquet-wasm':
    'Ships `parquet_wasm_bg.wasm`, copied beside the bundle. The WebAssembly module is compiled from Rust ' +
    'crates including the Apache Arrow and Apache Parquet Rust implementations (Apache-2.0) and their ' +
    'compression codecs; parquet-wasm is offered under MIT or Apache-2.0, of which this notice keeps both texts.',
  'js-tiktoken':
    'Includes byte-pair-encoding rank tables (`dist/ranks/*`). These tables are the encodings published by ' +
    'OpenAI with the `tiktoken` library (MIT, Copyright (c) 2022 OpenAI, Shantanu Jain).',
  '@vscode/codicons':
    'The icon font `codicon.ttf` and `codicon.css` are copied beside the webview bundles. The icons are ' +
    'licensed CC-BY-4.0 (text below) and the code MIT (LICENSE-CODE).',
  'apache-arrow': 'NOTICE.txt of the package is reproduced below its license.',
};

function licenseFiles(dir) {
  return readdirSync(dir)
    .filter((f) => /^(licen[cs]e|copying|notice|copyrightnotice)/i.test(f))
    .filter((f) => !f.endsWith('.js') && !f.endsWith('.ts'))
    .sort((a, b) => Number(/notice/i.test(a)) - Number(/notice/i.test(b)) || a.localeCompare(b));
}

function author(pkg) {
  const a = pkg.author;
  if (!a) return undefined;
  return typeof a === 'string' ? a : [a.name, a.email && `<${a.email}>`].filter(Boolean).join(' ');
}

export function noticesText(names) {
  const out = [
    '# Third-party notices',
    '',
    'The Shardwise extension bundles the following packages (inlined into `dist/*.js` by esbuild, or copied',
    'into `dist/`). Each section gives the package, its version, its license and the license text it ships.',
    '',
  ];
  for (const name of names) {
    const dir = join(root, 'node_modules', name);
    const pkg = JSON.parse(readFileSync(join(dir, 'package.json'), 'utf8'));
    const repo = typeof pkg.repository === 'string' ? pkg.repository : pkg.repository?.url;
    out.push(`## ${name} ${pkg.version}`, '');
    out.push(`License: ${pkg.license ?? 'see below'}${repo ? `  ` : ''}`);
    if (repo) out.push(`Source: ${repo.replace(/^git\+/, '')}`);
    out.push('');
    if (EXTRA[name]) out.push(EXTRA[name], '');
    const files = licenseFiles(dir);
    if (files.length) {
      for (const f of files) {
        out.push('```text', readFileSync(join(dir, f), 'utf8').replace(/^\uFEFF/, '').trimEnd(), '```', '');
      }
    } else {
      const holder = author(pkg) ?? `the ${name} authors`;
      const text = pkg.license === 'ISC' ? ISC_TEXT : pkg.license === 'MIT' ? MIT_TEXT : undefined;
      if (!text) throw new Error(`${name}: no license file and no known license text for ${pkg.license}`);
      out.push('The package ships no license file; its package.json declares ' + pkg.license + '.', '');
      out.push('```text', `Copyright (c) ${holder}`, '', text, '```', '');
    }
  }
  return out.join('\n');
}

/** Names listed as `## name version` headings in the notices file. */
export function listedPackages(file = join(root, 'THIRD_PARTY_NOTICES.md')) {
  if (!existsSync(file)) return [];
  return [...readFileSync(file, 'utf8').matchAll(/^## (\S+) \S+$/gm)].map((m) => m[1]);
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const names = process.argv.length > 2 ? process.argv.slice(2) : bundledPackages();
  writeFileSync(join(root, 'THIRD_PARTY_NOTICES.md'), noticesText(names));
  console.log(`THIRD_PARTY_NOTICES.md: ${names.join(', ')}`);
}
