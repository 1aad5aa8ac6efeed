// Prints the one summary line of `npm test` and exits non-zero when anything failed.
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';

const dir = process.argv[2];
let passed = 0;
let failed = 0;

const typecheck = readFileSync(path.join(dir, 'typecheck'), 'utf8').trim();
if (typecheck === 'pass') passed += 1;
else failed += 1;

const buildFailed = existsSync(path.join(dir, 'build'));
if (buildFailed) {
  console.error('next build failed: no tests were run against the app');
  failed += 1;
}

const vitestFile = path.join(dir, 'vitest.json');
if (buildFailed) {
  // Nothing else ran.
} else if (existsSync(vitestFile)) {
  const report = JSON.parse(readFileSync(vitestFile, 'utf8'));
  passed += report.numPassedTests;
  failed += report.numFailedTests;
  // A file that fails to load has no tests to count; count it as a failure.
  failed += report.testResults.filter((r) => r.status === 'failed' && r.assertionResults.length === 0).length;
} else {
  console.error('vitest wrote no report');
  failed += 1;
}

console.log(`\nSummary: ${passed} passed, ${failed} failed`);
process.exit(failed === 0 ? 0 : 1);
