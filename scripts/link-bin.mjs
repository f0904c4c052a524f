// `npx bleedwright` inside this checkout: npm does not link a package's own bin into its
// node_modules/.bin, so do it here. Harmless when the project is installed elsewhere.
import { existsSync, mkdirSync, rmSync, symlinkSync, chmodSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const binDir = join(root, 'node_modules', '.bin');
const target = join(root, 'bin', 'bleedwright.js');
if (existsSync(join(root, 'node_modules')) && existsSync(target)) {
  mkdirSync(binDir, { recursive: true });
  const link = join(binDir, 'bleedwright');
  rmSync(link, { force: true });
  symlinkSync(relative(binDir, target), link);
  chmodSync(target, 0o755);
}
