// The tokenizer picker's search of the model-hub client's local cache, on a cache laid out in a
// temporary folder as the client lays it out (from memory of its documentation: models--org--name,
// snapshots/<revision>, refs/main); every path the search touches is watched.
import * as fs from 'node:fs';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, sep } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { findCachedModels, hubCacheRoot, type CacheFs } from '../../../../src/engine/tokens/hubCache.js';

let dir: string;
const touched: string[] = [];
const watched: CacheFs = {
  readdirSync: (p) => (touched.push(p), fs.readdirSync(p)),
  existsSync: (p) => (touched.push(p), fs.existsSync(p)),
  readFileSync: (p, e) => (touched.push(p), fs.readFileSync(p, e)),
};

function file(path: string, text = '{}'): void {
  mkdirSync(join(path, '..'), { recursive: true });
  writeFileSync(path, text);
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-hub-'));
  const hub = join(dir, 'hf-home', 'hub');
  file(join(hub, 'models--coop--bike-repair-7b', 'snapshots', 'aaaaaaaa1111', 'tokenizer.json'));
  file(join(hub, 'models--coop--bike-repair-7b', 'snapshots', 'bbbbbbbb2222', 'tokenizer.json'));
  file(join(hub, 'models--coop--bike-repair-7b', 'refs', 'main'), 'bbbbbbbb2222\n');
  // A snapshot without tokenizer.json (weights only), a dataset and a stray file are not models to pick.
  file(join(hub, 'models--coop--vision-only', 'snapshots', 'cccc', 'config.json'));
  file(join(hub, 'datasets--coop--chats', 'snapshots', 'dddd', 'tokenizer.json'));
  file(join(hub, 'version.txt'), '1');
  file(join(hub, 'models--solo', 'snapshots', 'eeee', 'tokenizer.json'));
  // Another cache elsewhere under home, which the environment does not name.
  file(join(dir, 'home', '.cache', 'huggingface', 'hub', 'models--other--model', 'snapshots', 'ffff', 'tokenizer.json'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('hubCacheRoot', () => {
  it('follows the client: HF_HUB_CACHE, else HF_HOME/hub, else XDG_CACHE_HOME, else ~/.cache/huggingface/hub', () => {
    expect(hubCacheRoot({ HF_HUB_CACHE: '/c', HF_HOME: '/h' }, '/home/u')).toBe('/c');
    expect(hubCacheRoot({ HF_HOME: '/h' }, '/home/u')).toBe(join('/h', 'hub'));
    expect(hubCacheRoot({ XDG_CACHE_HOME: '/x' }, '/home/u')).toBe(join('/x', 'huggingface', 'hub'));
    expect(hubCacheRoot({}, '/home/u')).toBe(join('/home/u', '.cache', 'huggingface', 'hub'));
    expect(hubCacheRoot({ HF_HUB_CACHE: '  ' }, '/home/u')).toBe(join('/home/u', '.cache', 'huggingface', 'hub'));
  });
});

describe('findCachedModels', () => {
  it('lists the snapshot folders holding tokenizer.json, the branch revision first, and reads nothing outside the root', () => {
    touched.length = 0;
    const root = join(dir, 'hf-home', 'hub');
    const found = findCachedModels({ HF_HOME: join(dir, 'hf-home') }, join(dir, 'home'), watched);
    expect(found.map((m) => [m.label, m.folder, m.current])).toEqual([
      ['coop/bike-repair-7b @ bbbbbbbb', join(root, 'models--coop--bike-repair-7b', 'snapshots', 'bbbbbbbb2222'), true],
      ['coop/bike-repair-7b @ aaaaaaaa', join(root, 'models--coop--bike-repair-7b', 'snapshots', 'aaaaaaaa1111'), false],
      ['solo', join(root, 'models--solo', 'snapshots', 'eeee'), false],
    ]);
    expect(touched.length).toBeGreaterThan(0);
    for (const p of touched) expect(p === root || p.startsWith(root + sep), p).toBe(true);
  });

  it('finds the default cache under home when no variable is set, and nothing when the root is missing', () => {
    touched.length = 0;
    const found = findCachedModels({}, join(dir, 'home'), watched);
    expect(found.map((m) => m.model)).toEqual(['other/model']);
    expect(findCachedModels({ HF_HUB_CACHE: join(dir, 'nowhere') }, join(dir, 'home'), watched)).toEqual([]);
  });
});
