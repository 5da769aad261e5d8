// `npm run bench`: speed and memory goals, measured as medians and ratios inside one run
// (the machines are shared and noisy; never as timed assertions in tests).

import { readdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { availableVariants, type Scenario } from '../../src/circuit/scenario.js';
import { runVariant, type VariantRun } from '../../src/simulation/run-variant.js';
import { ExpmSegmentIntegrator } from '../oracle/expm-segment.js';
import { OdexSegmentIntegrator } from '../../src/solver/odex-segment.js';
import { withConstantParts, withIdealParts } from '../../src/model/ideal-parts.js';
import { availableParallelism } from 'node:os';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { gridPoints } from '../../src/study/study-points.js';
import { fitBench } from './fit-capture.js';
import { monteCarloBench } from './monte-carlo.js';
import { designBench } from './design.js';
import { pageBench } from './page.js';
import { exactLimitBench } from './exact-limit.js';
// The compiled study runner (npm run bench builds first), so that its workers load compiled code
// as the CLI's do: under tsx each worker would first load and transpile the sources.
const compiledStudy = '../../dist/study/run-study.js';
const { runStudy, createStudyPool } = (await import(compiledStudy)) as typeof import('../../src/study/run-study.js');

const REPEATS = 3;
const TARGET_SCENARIO_SECONDS = 2;
const TARGET_EVALUATIONS_PER_PERIOD = 10_000;
const TARGET_PEAK_MEMORY_MB = 200;
const TARGET_SWEEP_SPEED_UP = 1.7;
const SWEEP_REPEATS = 5;

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1]!;
const pad = (s: string | number, n: number): string => String(s).padStart(n);

/** Medians of interleaved runs: alternating the contenders spreads the machine's noise over all of them. */
function timedTogether(fns: ReadonlyArray<() => VariantRun>): Array<{ run: VariantRun; ms: number }> {
  const times: number[][] = fns.map(() => []);
  const runs: VariantRun[] = [];
  // One untimed round first: the first run in a process pays for the JIT (about 5× a warm one).
  for (const fn of fns) fn();
  for (let i = 0; i < REPEATS; i++) {
    fns.forEach((fn, k) => {
      const t0 = performance.now();
      const run = fn();
      times[k]!.push(performance.now() - t0);
      if (i === 0) runs[k] = run;
    });
  }
  return fns.map((_, k) => ({ run: runs[k]!, ms: median(times[k]!) }));
}

const TARGET_REAL_PARTS_RATIO = 3;

/** odex for every mode, linear or not: the adaptive solver alone, for the real-parts cost comparison. */
const odexOnly = (absoluteTolerance: number[], settings: { relativeTolerance: number }, stateSize: number): OdexSegmentIntegrator =>
  new OdexSegmentIntegrator({ stateSize, relativeTolerance: settings.relativeTolerance, absoluteTolerance });

async function scenarioBench(file: string): Promise<{ ok: boolean; totalMs: number }> {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new Error(`${file}: invalid`);
  const scenario: Scenario = loaded.scenario;
  const constant = withConstantParts(scenario);
  const ideal = withIdealParts(scenario);
  let totalMs = 0;
  let ok = true;
  let exactOk = true;
  console.log(`\n${scenario.name}  (${file})`);
  console.log(`  "const": the same circuit with every part's value constant (Coss at Vin + VR, no forward recovery; loop, junction capacitance, reverse recovery kept), run on odex alone ("odex") and as flyclamp runs it, on the exact propagators ("exact"); real/const compares with the odex run (the real-parts target)`);
  console.log(`  "ideal": constant, ideal parts (no loop, ideal diode) as flyclamp runs them; "oracle": the test suite's matrix-exponential integrator on the ideal circuit`);
  console.log(`  ${'variant'.padEnd(8)}${pad('cycles', 8)}${pad('eval/period', 13)}${pad('settled ms', 12)}${pad('const odex', 12)}${pad('real/const', 12)}${pad('const exact', 13)}${pad('real/exact', 12)}${pad('ideal ms', 10)}${pad('oracle ms', 11)}${pad('ideal/oracle', 14)}${pad('Δpeak V', 10)}`);
  for (const variant of availableVariants(scenario)) {
    const [real, constantOdex, constantExact, flyclampIdeal, oracle] = timedTogether([
      () => runVariant(scenario, variant),
      () => runVariant(constant, variant, { integrator: odexOnly }),
      () => runVariant(constant, variant),
      () => runVariant(ideal, variant),
      () => runVariant(ideal, variant, { integrator: () => new ExpmSegmentIntegrator() }),
    ]);
    totalMs += real!.ms;
    const perPeriod = (r: VariantRun): number => r.stats.derivativeEvaluations / r.cycles;
    const ratio = real!.ms / constantOdex!.ms;
    ok &&= perPeriod(flyclampIdeal!.run) <= TARGET_EVALUATIONS_PER_PERIOD && ratio <= TARGET_REAL_PARTS_RATIO;
    // Issue 11's form of the same target: against the constant parts as flyclamp runs them.
    exactOk &&= real!.ms / constantExact!.ms <= TARGET_REAL_PARTS_RATIO;
    const peak = (r: VariantRun): number => Math.max(...r.recorder.cycles.map((c) => c.drainVoltage.max));
    console.log(`  ${variant.padEnd(8)}${pad(real!.run.cycles, 8)}${pad(perPeriod(real!.run).toFixed(0), 13)}${pad(real!.ms.toFixed(0), 12)}${pad(constantOdex!.ms.toFixed(0), 12)}${pad(ratio.toFixed(2), 12)}`
      + `${pad(constantExact!.ms.toFixed(0), 13)}${pad((real!.ms / constantExact!.ms).toFixed(2), 12)}`
      + `${pad(flyclampIdeal!.ms.toFixed(0), 10)}${pad(oracle!.ms.toFixed(0), 11)}${pad((flyclampIdeal!.ms / oracle!.ms).toFixed(2), 14)}${pad((peak(flyclampIdeal!.run) - peak(oracle!.run)).toExponential(1), 10)}`);
  }
  const pass = totalMs < TARGET_SCENARIO_SECONDS * 1000;
  console.log(`  all variants to the settled answer: ${totalMs.toFixed(0)} ms (target < ${TARGET_SCENARIO_SECONDS * 1000} ms: ${pass ? 'met' : 'MISSED'}); real parts ≤ ${TARGET_REAL_PARTS_RATIO}× the constant-part time on odex per variant: ${ok ? 'met' : 'MISSED'}, on the exact propagators: ${exactOk ? 'met' : 'MISSED'}`);
  return { ok: ok && exactOk && pass, totalMs };
}

/** A 2,000-cycle run in a fresh process, so that its peak resident memory is its own. */
function memoryBench(): boolean {
  const script = fileURLToPath(new URL('./long-run.ts', import.meta.url));
  const child = spawnSync(process.execPath, ['--import', 'tsx', script], { encoding: 'utf8' });
  if (child.status !== 0) {
    console.log(`\n2,000-cycle run failed: ${child.stderr}`);
    return false;
  }
  const { cycles, maxRssMb, seconds } = JSON.parse(child.stdout) as { cycles: number; maxRssMb: number; seconds: number };
  const pass = maxRssMb < TARGET_PEAK_MEMORY_MB;
  console.log(`\n${cycles}-cycle run (clamp variant, exactly 2,000 cycles before recording): ${seconds.toFixed(1)} s, peak memory ${maxRssMb.toFixed(0)} MB (target < ${TARGET_PEAK_MEMORY_MB} MB: ${pass ? 'met' : 'MISSED'})`);
  return pass;
}

/** A 9-point leakage sweep, all variants, on the worker pool against one point after another. */
async function sweepBench(): Promise<boolean> {
  const loaded = await loadScenarioFile('scenarios/bias-48v.json');
  if (!loaded.ok) throw new Error('bias-48v.json invalid');
  const base = scenarioToJson(loaded.scenario);
  const nominal = loaded.scenario.transformer.leakageInductance;
  const points = gridPoints([{ path: 'transformer.leakageInductance', from: 0.8 * nominal, to: 1.2 * nominal, steps: 9 }]);
  // Both sides warm: the pool is made once and warmed, as the server keeps its own; its start-up
  // (spawning workers, loading and JIT-compiling the code in each) is reported separately.
  const workers = availableParallelism();
  const time = async (pool?: ReturnType<typeof createStudyPool>): Promise<number> => {
    const t0 = performance.now();
    const study = await runStudy(base, points, pool ? { pool } : { workers: 0 });
    if (study.points.some((p) => p.failure)) throw new Error('a sweep point failed');
    return performance.now() - t0;
  };
  await time();
  const pool = createStudyPool(workers);
  const coldMs = await time(pool);
  await time(pool); // the workers' JIT keeps improving over the first sweeps
  const sequential: number[] = [], pooled: number[] = [];
  try {
    for (let i = 0; i < SWEEP_REPEATS; i++) { sequential.push(await time()); pooled.push(await time(pool)); }
  } finally {
    await pool.destroy();
  }
  const speedUp = median(sequential) / median(pooled);
  const pass = speedUp >= TARGET_SWEEP_SPEED_UP;
  console.log(`\n9-point leakage sweep, all variants (bias-48v), medians of ${SWEEP_REPEATS}: one after another ${median(sequential).toFixed(0)} ms, warm pool of ${workers} processes ${median(pooled).toFixed(0)} ms: speed-up ${speedUp.toFixed(2)}× (target ≥ ${TARGET_SWEEP_SPEED_UP}×: ${pass ? 'met' : 'MISSED'}); the first sweep on a new pool took ${coldMs.toFixed(0)} ms`);
  return pass;
}

const files = readdirSync('scenarios').filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json')).sort().map((f) => `scenarios/${f}`);
console.log(`flyclamp benchmark: medians of ${REPEATS} runs, one core; targets: < ${TARGET_SCENARIO_SECONDS} s per demo scenario (all variants), ≤ ${TARGET_EVALUATIONS_PER_PERIOD} evaluations per period with ideal parts, real parts ≤ ${TARGET_REAL_PARTS_RATIO}× the constant-part time on odex`);
let allMet = true;
if (process.argv.includes('--monte-carlo') || process.argv.includes('--page') || process.argv.includes('--exact')) {
  const met = process.argv.includes('--page') ? await pageBench() : process.argv.includes('--exact') ? await exactLimitBench() : await monteCarloBench();
  console.log(`\n${met ? 'all targets met' : 'some targets MISSED'}`);
  process.exit(0);
}
for (const file of files) allMet = (await scenarioBench(file)).ok && allMet;
// `npm run bench -- --scenarios`: the per-scenario table alone (a minute instead of several);
// `-- --monte-carlo`, `-- --page` or `-- --exact`: that target alone.
if (!process.argv.includes('--scenarios')) {
  allMet = (await exactLimitBench()) && allMet;
  allMet = memoryBench() && allMet;
  allMet = (await sweepBench()) && allMet;
  allMet = (await fitBench()) && allMet;
  allMet = (await monteCarloBench()) && allMet;
  allMet = (await designBench()) && allMet;
  allMet = (await pageBench()) && allMet;
}
console.log(`\n${allMet ? 'all targets met' : 'some targets MISSED'}`);
