import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

// CI's closing lines from a vitest JSON report (the shape vitest 4 writes) and vitest's exit code.
const script = fileURLToPath(new URL('../../.ci/summarize.cjs', import.meta.url));

let work: string;
beforeAll(async () => { work = await mkdtemp(join(tmpdir(), 'flyclamp-ci-')); });
afterAll(async () => { if (work) await rm(work, { recursive: true, force: true }); });

interface FileResult { name: string; status: 'passed' | 'failed'; message?: string; assertionResults: Array<{ status: 'passed' | 'failed' }> }
async function summarize(files: FileResult[], exitCode: number): Promise<{ status: number | null; lines: string[] }> {
  const tests = files.flatMap((f) => f.assertionResults);
  const report = {
    numTotalTests: tests.length,
    numPassedTests: tests.filter((t) => t.status === 'passed').length,
    numFailedTests: tests.filter((t) => t.status === 'failed').length,
    numPendingTests: 0, numTodoTests: 0, testResults: files,
  };
  const file = join(work, `report-${Math.random().toString(36).slice(2)}.json`);
  await writeFile(file, JSON.stringify(report));
  const run = spawnSync(process.execPath, [script, file, String(exitCode)], { encoding: 'utf8' });
  return { status: run.status, lines: run.stdout.trim().split('\n') };
}
const passing = (name: string, n = 2): FileResult => ({ name, status: 'passed', assertionResults: Array(n).fill({ status: 'passed' }) });

describe('.ci/summarize.cjs', () => {
  it('all passed: the two closing lines say 0 failed, exit 0', async () => {
    const { status, lines } = await summarize([passing('a.test.ts'), passing('b.test.ts', 3)], 0);
    expect(lines.slice(-2)).toEqual(['vitest: 5 passed, 0 failed, 0 skipped', '5 passed, 0 failed']);
    expect(status).toBe(0);
  });

  it('a file whose afterAll failed while its tests passed counts as a failure and is named', async () => {
    const hook: FileResult = { name: 'api.test.ts', status: 'failed', message: 'Hook timed out in 10000ms.\nmore', assertionResults: [{ status: 'passed' }] };
    const { status, lines } = await summarize([passing('a.test.ts'), hook], 1);
    expect(lines).toContain('file failed outside its tests (hook, import or teardown): api.test.ts: Hook timed out in 10000ms.');
    expect(lines.slice(-2)).toEqual(['vitest: 3 passed, 1 failed, 0 skipped', '3 passed, 1 failed']);
    expect(status).toBe(1);
  });

  it('a non-zero exit with nothing counted is one failure, never "0 failed"', async () => {
    const { status, lines } = await summarize([passing('a.test.ts')], 1);
    expect(lines.slice(-2)).toEqual(['vitest: 2 passed, 1 failed, 0 skipped', '2 passed, 1 failed']);
    expect(status).toBe(1);
  });

  it('failed tests are counted once, their file not again', async () => {
    const failing: FileResult = { name: 'x.test.ts', status: 'failed', assertionResults: [{ status: 'failed' }, { status: 'failed' }, { status: 'passed' }] };
    const { lines } = await summarize([failing], 1);
    expect(lines.slice(-1)).toEqual(['1 passed, 2 failed']);
  });

  it('no test at all is a failure', async () => {
    const { status, lines } = await summarize([], 0);
    expect(lines).toContain('no test ran');
    expect(lines.slice(-1)).toEqual(['0 passed, 1 failed']);
    expect(status).toBe(1);
  });
});
