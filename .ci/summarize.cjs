// The closing lines of CI from vitest's JSON report and its exit code:
//   vitest: N passed, N failed, N skipped
//   N passed, N failed
// A file can fail with every test passed (an error in a hook, an import, a teardown): such files
// count as failures too, and a non-zero exit with nothing counted is reported as one failure, so
// the closing line never says "0 failed" on a failed run. Exits 1 when anything failed.
const { readFileSync } = require('node:fs');

const [file, exitText] = process.argv.slice(2);
const exitCode = Number(exitText ?? 0);
const report = JSON.parse(readFileSync(file, 'utf8'));
const skipped = (report.numPendingTests ?? 0) + (report.numTodoTests ?? 0);
const fileErrors = (report.testResults ?? []).filter((t) => t.status === 'failed' && !(t.assertionResults ?? []).some((a) => a.status === 'failed'));
for (const t of fileErrors) console.log(`file failed outside its tests (hook, import or teardown): ${t.name}: ${String(t.message ?? '').split('\n')[0]}`);
let failed = (report.numFailedTests ?? 0) + fileErrors.length;
if ((report.numTotalTests ?? 0) === 0) { console.log('no test ran'); failed = Math.max(failed, 1); }
if (exitCode !== 0 && failed === 0) { console.log(`vitest exited with code ${exitCode} without a failed test (an unhandled error or a timeout in teardown)`); failed = 1; }
console.log(`vitest: ${report.numPassedTests ?? 0} passed, ${failed} failed, ${skipped} skipped`);
console.log(`${report.numPassedTests ?? 0} passed, ${failed} failed`);
process.exitCode = failed > 0 ? 1 : 0;
