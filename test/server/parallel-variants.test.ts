import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import serverWorker, { type ServerTask, type ServerTaskResult } from '../../src/server/server-worker.js';
import { simulateVariantsInParallel } from '../../src/server/simulate-parallel.js';
import { runSimulateTask } from '../../src/server/simulate-task.js';
import { runWarmUpTask } from '../../src/server/warm-up-task.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';

describe('simulateVariantsInParallel(run, task)', () => {
  it('answers as one task running the variants in turn would, for a scenario given by its output power (operating point settled once)', async () => {
    const json = JSON.parse(readFileSync('scenarios/gate-drive-24v.json', 'utf8')) as Record<string, Record<string, unknown>>;
    const { dutyCycle: _duty, ...sw } = json['switch']!;
    const validated = validateScenario({ ...json, switch: sw, output: { ...json['output'], power: 6, efficiency: 0.85 } });
    if (!validated.ok) throw new Error(JSON.stringify(validated.issues));
    const task = { scenario: validated.scenario, variants: ['bare', 'clamp', 'damped'] as const, columns: 500, capMs: 60_000 };
    const kinds: string[] = [];
    const run = async (t: ServerTask): Promise<ServerTaskResult> => { kinds.push(t.kind); return serverWorker(t); };
    const parallel = await simulateVariantsInParallel(run, { ...task, variants: [...task.variants] });
    const single = runSimulateTask({ ...task, variants: [...task.variants] });
    expect(kinds).toEqual(['operating-point', 'simulate', 'simulate', 'simulate']);
    // Everything but the clock: wall times differ from run to run.
    const withoutClock = (answer: unknown): unknown => JSON.parse(JSON.stringify(answer, (key, value: unknown) => (key === 'wallTimeMs' ? undefined : value)));
    expect(withoutClock(parallel)).toEqual(withoutClock(single));
  }, 60_000);
});

describe('runWarmUpTask()', () => {
  it('runs its invented scenario through every variant', () => {
    const result = runWarmUpTask();
    expect(result.ok).toBe(true);
  }, 30_000);
});
