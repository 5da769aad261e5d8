// Issue target: a 1,000-sample Monte Carlo (leakage ±20 %, drain capacitance ±10 %, clamp
// resistor ±5 %, uniform) within 30 s wall on two cores, and every point's verdict (settled or
// not; over the derated limit or not, per variant) the same as a rerun at a 100× tighter
// tolerance. Measured on the constant-part demo (gate-drive-24v) and, for scale, on 100 samples of
// the real-part bias-48v demo.

import { availableParallelism } from 'node:os';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { scenarioToJson, type ScenarioJson } from '../../src/circuit/scenario-json.js';
import { monteCarloPoints } from '../../src/study/study-points.js';
import type { PointValues } from '../../src/study/study-points.js';

const compiledStudy = '../../dist/study/run-study.js';
const { runStudy, createStudyPool } = (await import(compiledStudy)) as typeof import('../../src/study/run-study.js');

const TARGET_WALL_SECONDS = 30;
const TOLERANCES = [
  { path: 'transformer.leakageInductance', fraction: 0.2, distribution: 'uniform' as const },
  { path: 'switch.drainCapacitance', fraction: 0.1, distribution: 'uniform' as const },
  { path: 'clamp.resistance', fraction: 0.05, distribution: 'uniform' as const },
];

type Verdicts = Array<string | null>;

async function study(base: ScenarioJson, points: PointValues[], deratedLimit: number): Promise<{ seconds: number; verdicts: Verdicts }> {
  const pool = createStudyPool(availableParallelism());
  try {
    const t0 = performance.now();
    const run = await runStudy(base, points, { pool });
    const seconds = (performance.now() - t0) / 1000;
    const verdicts = run.points.map((p) => (p.variants
      ? Object.entries(p.variants).map(([v, m]) => `${v}:${m!.orbit}:${m!.peakDrainVoltage > deratedLimit ? 'over' : 'under'}`).join(' ')
      : null));
    return { seconds, verdicts };
  } finally {
    await pool.destroy();
  }
}

async function one(file: string, samples: number, checkTight: boolean): Promise<boolean> {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new Error(`${file} invalid`);
  const s = loaded.scenario;
  const base = scenarioToJson(s);
  // A curve is varied by scaling every point: its value is C at 0 V (as sweep --tolerance reads it).
  const coss = s.switch.drainCapacitance;
  const nominal = (path: string): number => path === 'transformer.leakageInductance' ? s.transformer.leakageInductance
    : path === 'clamp.resistance' ? s.clamp!.resistance : typeof coss === 'number' ? coss : coss[0]![1];
  const points = monteCarloPoints(TOLERANCES, nominal, samples, 1);
  const deratedLimit = s.switch.voltageRating * 0.8;
  const normal = await study(base, points, deratedLimit);
  const failed = normal.verdicts.filter((v) => v === null).length;
  let agree = '';
  let ok = samples < 1000 || normal.seconds <= TARGET_WALL_SECONDS;
  if (checkTight) {
    const sim = (base['simulation'] ?? {}) as Record<string, unknown>;
    const tight = { ...base, simulation: { ...sim, relativeTolerance: 1e-9, settleTolerance: 1e-7 } } as ScenarioJson;
    const rerun = await study(tight, points, deratedLimit);
    const differing = normal.verdicts.filter((v, i) => v !== rerun.verdicts[i]).length;
    agree = `; verdicts differing from a rerun at 100× tighter tolerances: ${differing} of ${samples} (target 0; the rerun took ${rerun.seconds.toFixed(1)} s)`;
    ok &&= differing === 0;
  }
  console.log(`  ${file}: ${samples} samples in ${normal.seconds.toFixed(1)} s wall on ${availableParallelism()} workers (${(1000 * normal.seconds / samples).toFixed(0)} ms per sample; ${failed} failed)${samples >= 1000 ? ` (target ≤ ${TARGET_WALL_SECONDS} s: ${normal.seconds <= TARGET_WALL_SECONDS ? 'met' : 'MISSED'})` : ''}${agree}`);
  return ok;
}

export async function monteCarloBench(): Promise<boolean> {
  console.log('\nMonte Carlo, leakage ±20 %, drain capacitance ±10 %, clamp resistor ±5 % (uniform), seed 1:');
  const a = await one('scenarios/gate-drive-24v.json', 1000, true);
  const b = await one('scenarios/bias-48v.json', 100, false);
  return a && b;
}
