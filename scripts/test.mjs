// `npm test`: installs missing Debian packages, runs every vitest suite, and ends with the line
// `N passed, N failed` that CI reads.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, existsSync, rmSync } from 'node:fs';
import { ensureSystemPackages, TEST_PACKAGES } from './system-deps.mjs';

ensureSystemPackages(TEST_PACKAGES);
mkdirSync('.data', { recursive: true });
const resultsFile = '.data/test-results.json';
rmSync(resultsFile, { force: true });

const args = ['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${resultsFile}`, ...process.argv.slice(2)];
const run = spawnSync('npx', args, { stdio: 'inherit' });

let passed = 0;
let failed = 0;
if (existsSync(resultsFile)) {
  const results = JSON.parse(readFileSync(resultsFile, 'utf8'));
  passed = results.numPassedTests;
  failed = results.numFailedTests + (results.numFailedTestSuites > 0 && results.numFailedTests === 0 ? results.numFailedTestSuites : 0);
} else {
  failed = 1;
}
if (run.status !== 0 && failed === 0) failed = 1;
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed > 0 || run.status !== 0 ? 1 : 0);
