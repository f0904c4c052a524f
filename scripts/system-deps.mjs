// Debian packages the two README commands rely on. Installs what is missing when running as root
// (apt-get), otherwise prints the exact command to run and stops.
import { execFileSync, spawnSync } from 'node:child_process';

export const START_PACKAGES = ['postgresql'];
export const TEST_PACKAGES = ['postgresql', 'chromium', 'poppler-utils', 'qpdf', 'imagemagick', 'libimage-exiftool-perl', 'img2pdf', 'unzip'];

function installed(pkg) {
  const r = spawnSync('dpkg-query', ['-W', '-f=${Status}', pkg], { encoding: 'utf8' });
  return r.status === 0 && r.stdout.includes('install ok installed');
}

export function ensureSystemPackages(packages) {
  const missing = packages.filter((p) => !installed(p));
  if (missing.length === 0) return;
  const command = `apt-get update && apt-get install -y ${missing.join(' ')}`;
  if (process.getuid?.() !== 0) {
    console.error(`Bleedwright needs these Debian packages: ${missing.join(', ')}.\nRun as root:\n  ${command}`);
    process.exit(1);
  }
  console.log(`Installing Debian packages: ${missing.join(' ')}`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  execFileSync('apt-get', ['install', '-y', '-qq', '--no-install-recommends', ...missing], { stdio: 'inherit', env });
}

if (import.meta.url === `file://${process.argv[1]}`) {
  ensureSystemPackages(process.argv[2] === 'test' ? TEST_PACKAGES : START_PACKAGES);
}
