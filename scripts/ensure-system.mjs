// Installs the Debian packages the tests need, only when missing: Chromium (headless browser for
// the webview and workbench tests), libkrb5-dev (code-server's native build) and zstd (the
// reference compressor the zstd reader is compared with). Needs root and apt-get; otherwise says what to install and stops.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export function missingSystemPackages() {
  const missing = [];
  if (!existsSync('/usr/bin/chromium')) missing.push('chromium');
  const krb = spawnSync('dpkg', ['-s', 'libkrb5-dev'], { stdio: 'ignore' });
  if (krb.status !== 0) missing.push('libkrb5-dev');
  const zstd = spawnSync('zstd', ['--version'], { stdio: 'ignore' });
  if (zstd.status !== 0) missing.push('zstd');
  return missing;
}

export function ensureSystemPackages() {
  const missing = missingSystemPackages();
  if (!missing.length) return true;
  const root = typeof process.getuid === 'function' && process.getuid() === 0;
  if (!root || !existsSync('/usr/bin/apt-get')) {
    console.error(`Shardwise needs these Debian packages for its tests: ${missing.join(' ')}\n` +
      `Install them with: sudo apt-get install -y ${missing.join(' ')}`);
    return false;
  }
  console.log(`installing Debian packages: ${missing.join(' ')}`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  execFileSync('apt-get', ['update', '-q'], { stdio: 'inherit', env });
  execFileSync('apt-get', ['install', '-y', '-q', '--no-install-recommends', ...missing], { stdio: 'inherit', env });
  return true;
}

if (import.meta.url === `file://${process.argv[1]}`) process.exit(ensureSystemPackages() ? 0 : 1);
