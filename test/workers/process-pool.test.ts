import { afterEach, describe, expect, it } from 'vitest';
import { getEventListeners } from 'node:events';
import { readFile } from 'node:fs/promises';
import { createStudyPool, runStudy, type StudyPool } from '../../src/study/run-study.js';
import type { PointTask } from '../../src/study/point-task.js';
import { ProcessPool } from '../../src/workers/process-pool.js';

type Doc = Record<string, any>;
const demo = async (id: string): Promise<Doc> => JSON.parse(await readFile(`scenarios/${id}.json`, 'utf8')) as Doc;
/** About 300 cycles at the tightest tolerances, some 3 s (see test/server/request-bounds.test.ts). */
async function slowScenario(): Promise<Doc> {
  const doc = await demo('mains-aux-12v');
  doc.simulation = { settleTolerance: 1e-12, relativeTolerance: 1e-12, maxCycles: 100_000 };
  return doc;
}
const quick = async (): Promise<PointTask> => ({ scenarioJson: await demo('bias-48v'), variants: ['bare'] });
const alive = (pid: number): boolean => { try { process.kill(pid, 0); return true; } catch { return false; } };
const until = async (what: () => boolean): Promise<void> => {
  for (let i = 0; i < 600 && !what(); i++) await new Promise((ok) => setTimeout(ok, 50));
};

let pool: StudyPool | undefined;
afterEach(async () => { await pool?.destroy(); pool = undefined; });

describe('ProcessPool', () => {
  it('a killed child fails its task with the reason, is replaced, and the next task runs', async () => {
    pool = createStudyPool(1);
    const [first] = pool.pids;
    const task = pool.run({ scenarioJson: await slowScenario(), variants: ['bare'] });
    await new Promise((ok) => setTimeout(ok, 500));
    process.kill(first!, 'SIGKILL');
    await expect(task).rejects.toThrow(/a worker process exited \(signal SIGKILL\) while running a task/);
    await until(() => pool!.pids.length === 1 && pool!.pids[0] !== first);
    expect(pool.pids).toHaveLength(1);
    expect(pool.pids[0]).not.toBe(first);
    const next = await pool.run(await quick());
    expect(next.ok).toBe(true);
    expect(pool.broken).toBe(false);
  }, 60_000);

  it('a cancelled running task stops: its child is killed at once and replaced', async () => {
    pool = createStudyPool(1);
    const [first] = pool.pids;
    const abort = new AbortController();
    const task = pool.run({ scenarioJson: await slowScenario(), variants: ['bare'] }, abort.signal);
    await new Promise((ok) => setTimeout(ok, 500));
    abort.abort();
    await expect(task).rejects.toThrow('aborted');
    await until(() => !alive(first!));
    expect(alive(first!)).toBe(false);
    expect((await pool.run(await quick())).ok).toBe(true);
  }, 60_000);

  it('gives up replacing children that die on start, rejects its tasks with the reason, and says it is broken', async () => {
    const failing = new ProcessPool<PointTask, unknown>(new URL('./exits-at-once.ts', import.meta.url), 1);
    try {
      await until(() => failing.broken);
      expect(failing.broken).toBe(true);
      await expect(failing.run(await quick())).rejects.toThrow('the worker processes keep failing');
    } finally { await failing.destroy(); }
  }, 60_000);

  it('keeps one abort listener per signal however many tasks wait on it, and none once they are settled', async () => {
    pool = createStudyPool(2);
    const abort = new AbortController();
    const task = await quick();
    // Twelve queued under one signal: a listener each would pass Node's warning threshold of 10.
    const runs = Array.from({ length: 12 }, () => pool!.run(task, abort.signal));
    expect(getEventListeners(abort.signal, 'abort')).toHaveLength(1);
    await Promise.all(runs);
    expect(getEventListeners(abort.signal, 'abort')).toHaveLength(0);
  }, 120_000);
});

describe('runStudy at its deadline', () => {
  it('returns the finished points, marks the study stopped by the deadline, and stops the running ones', async () => {
    pool = createStudyPool(1);
    const base = await slowScenario();
    delete base.damper;
    delete base.clamp;
    // Point 1 at the default tolerances settles in about 0.3 s; point 2, at a quarter of the
    // switching frequency (four times the ring periods per cycle), would take some 12 s.
    const points = [
      { 'simulation.settleTolerance': 1e-5, 'simulation.relativeTolerance': 1e-7 },
      { 'switch.frequency': 65e3 / 4 }, // the demo's 65 kHz
    ];
    expect((await pool.run(await quick())).ok).toBe(true); // the child is up: start-up is not part of the race
    const started = Date.now();
    const study = await runStudy(base as never, points, { pool, deadlineMs: started + 3000 });
    expect(study.interrupted).toBe(true);
    expect(study.stoppedBy).toBe('deadline');
    expect(study.points.map((p) => p.index)).toEqual([0]);
    expect(study.points[0]!.variants?.bare?.settled).toBe(true);
    // Well before the slow point could have finished: it was stopped, not waited for.
    expect(Date.now() - started).toBeLessThan(15_000);
  }, 60_000);
});
