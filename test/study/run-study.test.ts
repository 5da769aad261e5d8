import { describe, expect, it } from 'vitest';
import { execFile, spawn } from 'node:child_process';
import { promisify } from 'node:util';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { runStudy, scenarioAtPoint } from '../../src/study/run-study.js';
import { gridPoints } from '../../src/study/study-points.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { simulationReport } from '../../src/analysis/simulation-report.js';
import { settledClampVoltage } from '../../src/equations/rcd-clamp.js';
import { labScenario } from '../support/lab-scenarios.js';

const run = promisify(execFile);

async function demoJson(file: string) {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new Error(file);
  return scenarioToJson(loaded.scenario);
}
const stripStats = (variants: Record<string, unknown>): unknown =>
  JSON.parse(JSON.stringify(variants, (k, v) => (k === 'stats' ? undefined : v)));

describe('runStudy(base, points)', () => {
  it('a swept point equals a direct simulate of the same values', async () => {
    const base = await demoJson('scenarios/bias-48v.json');
    const points = [{ 'transformer.leakageInductance': 1.5e-6, 'clamp.resistance': 4700 }];
    const study = await runStudy(base, points, { workers: 1 });
    const direct = validateScenario(scenarioAtPoint(base, points[0]!));
    if (!direct.ok) throw new Error('invalid');
    // A study point records one cycle of a settled orbit (it keeps only metrics): the direct run does too.
    const report = simulationReport(direct.scenario, ['bare', 'clamp', 'damped'].map((v) => runVariant(direct.scenario, v as 'bare', { recordedCyclesWhenSettled: 1 })));
    expect(stripStats(study.points[0]!.variants!)).toEqual(stripStats(report.variants));
  }, 60_000);

  it('points after the first start from its orbit: each agrees with a cold direct run within the settle tolerance, with the same verdict, in fewer cycles; in-process and pooled answers are identical', async () => {
    const base = await demoJson('scenarios/gate-drive-24v.json');
    const points = gridPoints([{ path: 'transformer.leakageInductance', from: 320e-9, to: 480e-9, steps: 4 }]);
    const here = await runStudy(base, points, { workers: 0 });
    const pooled = await runStudy(base, points, { workers: 2 });
    pooled.points.forEach((p, i) => expect(stripStats(p.variants!), `point ${i}`).toEqual(stripStats(here.points[i]!.variants!)));
    let warmCycles = 0, coldCycles = 0;
    for (const [i, point] of here.points.entries()) {
      const direct = validateScenario(scenarioAtPoint(base, points[i]!));
      if (!direct.ok) throw new Error('invalid');
      for (const v of ['bare', 'clamp', 'damped'] as const) {
        const cold = runVariant(direct.scenario, v, { recordedCyclesWhenSettled: 1 });
        const warm = point.variants![v]!;
        const peak = Math.max(...cold.recorder.cycles.map((c) => c.drainVoltage.max));
        expect(warm.settled, `point ${i} ${v}`).toBe(cold.orbit === 'settled');
        // The settle tolerance (1e-5) is relative to Vin + VR: ten of it, for the peak's own sensitivity.
        const plateau = direct.scenario.supply.voltage + direct.scenario.transformer.turnsRatio * (direct.scenario.output.voltage + direct.scenario.output.diodeDrop);
        expect(Math.abs(warm.peakDrainVoltage - peak), `point ${i} ${v}`).toBeLessThan(10 * direct.scenario.simulation.settleTolerance * plateau);
        if (i > 0) { warmCycles += warm.cycles; coldCycles += cold.cycles; }
      }
    }
    expect(warmCycles).toBeLessThan(coldCycles);
  }, 60_000);

  it('keeps a failed point with its reason and runs the others', async () => {
    const base = await demoJson('scenarios/gate-drive-24v.json');
    const study = await runStudy(base, [{ 'switch.dutyCycle': 0.3 }, { 'switch.dutyCycle': 0.8 }, { 'switch.dutyCycle': 0.25 }], { workers: 0 });
    expect(study.points.map((p) => p.failure === undefined)).toEqual([true, false, true]);
    expect(study.points[1]!.failure).toMatch(/switch\.dutyCycle/);
  }, 60_000);

  it.each(['scenarios/bias-48v.json', 'scenarios/mains-aux-12v.json', 'scenarios/gate-drive-24v.json'])(
    'peak drain stress rises monotonically with leakage inductance in %s, every variant (physics: more energy to absorb)', async (file) => {
      const base = await demoJson(file);
      const nominal = (base.transformer as { leakageInductance: number }).leakageInductance;
      const points = gridPoints([{ path: 'transformer.leakageInductance', from: 0.8 * nominal, to: 1.2 * nominal, steps: 5 }]);
      const study = await runStudy(base, points);
      for (const variant of ['bare', 'clamp', 'damped'] as const) {
        const peaks = study.points.map((p) => p.variants![variant]!.peakDrainVoltage);
        const avalanche = (base.switch as { avalancheVoltage?: number }).avalancheVoltage ?? Infinity;
        for (let i = 1; i < peaks.length; i++) {
          // A drain held in avalanche cannot rise further: there it stays at the breakdown voltage.
          if (peaks[i - 1]! >= avalanche * (1 - 1e-9)) expect(peaks[i]!, `${variant} point ${i}`).toBeCloseTo(avalanche, 6);
          else expect(peaks[i]!, `${variant} point ${i}`).toBeGreaterThan(peaks[i - 1]!);
        }
      }
    }, 120_000);

  it('across a leakage sweep, the bare peak follows Vin + VR + Ipk·√(Llk/Coss) within 2 percent (energy balance) and the settled clamp voltage follows the RCD-clamp equation within 0.5 percent (Choi, AN-4147, from memory)', async () => {
    // The lab circuit meets both formulas' assumptions: tiny winding resistance and drain
    // capacitance, a large clamp capacitor (small ripple), no diode drops.
    const base = scenarioToJson(labScenario({ transformer: { primaryResistance: 0.5 } }));
    const points = gridPoints([{ path: 'transformer.leakageInductance', from: 6e-6, to: 14e-6, steps: 5 }]);
    const study = await runStudy(base, points);
    for (const p of study.points) {
      const llk = p.values['transformer.leakageInductance']!;
      const bareFormula = 100 + 100 + 1 * Math.sqrt(llk / 10e-12);
      expect(Math.abs(p.variants!.bare!.peakDrainVoltage - bareFormula) / bareFormula).toBeLessThan(0.02);
      const vc = settledClampVoltage(15e3, llk, 1, 1e5, 100);
      expect(Math.abs(p.variants!.clamp!.clampVoltageMean! - vc) / vc).toBeLessThan(0.005);
    }
  }, 120_000);
});

describe('flyclamp sweep (CLI)', () => {
  it('--samples with a seed prints the same Monte Carlo JSON twice, with points, worst and percentiles', async () => {
    const args = ['dist/cli/main.js', 'sweep', 'scenarios/bias-48v.json', '--samples', '4', '--tolerance', 'transformer.leakageInductance=±20%', '--seed', '5', '--json'];
    const a = JSON.parse((await run(process.execPath, args)).stdout) as Record<string, unknown> & { points: Array<{ values: Record<string, number> }>; worst: Record<string, { index: number }>; monteCarlo: Record<string, { percentiles: { p50: number } }> };
    const b = JSON.parse((await run(process.execPath, args)).stdout) as typeof a;
    expect(a.points.map((p) => p.values)).toEqual(b.points.map((p) => p.values));
    expect(a.points).toHaveLength(4);
    expect(Object.keys(a.worst)).toEqual(['bare', 'clamp', 'damped']);
    expect(a.monteCarlo.clamp!.percentiles.p50).toBeGreaterThan(0);
  }, 60_000);

  it('bad --vary or --tolerance syntax exits 2 with a message naming the flag', async () => {
    for (const args of [['--vary', 'clamp.resistance=1k'], ['--samples', '3', '--tolerance', 'clamp.resistance=5%'], ['--vary', 'clamp.resistans=1k..2k']]) {
      const failed = await run(process.execPath, ['dist/cli/main.js', 'sweep', 'scenarios/bias-48v.json', ...args]).then(() => null, (e: { code: number; stderr: string }) => e);
      expect(failed, args.join(' ')).not.toBeNull();
      expect(failed!.code).toBe(2);
      expect(failed!.stderr).toMatch(/--(vary|tolerance)/);
      expect(failed!.stderr).not.toMatch(/\n\s+at /);
    }
  }, 30_000);

  it('Ctrl-C stops cleanly and keeps the finished points in the output', async () => {
    const child = spawn(process.execPath, ['dist/cli/main.js', 'sweep', 'scenarios/mains-aux-12v.json', '--vary', 'clamp.resistance=40k..80k:40', '--workers', '1', '--json', '--progress']);
    let stdout = '';
    child.stdout.on('data', (d: Buffer) => { stdout += d.toString(); });
    // Interrupt once two points are done (the progress lines say so), however busy the machine is.
    await new Promise<void>((ok) => {
      let stderr = '';
      child.stderr.on('data', (d: Buffer) => { stderr += d.toString(); if (/\] 2\/40 points/.test(stderr)) ok(); });
    });
    child.kill('SIGINT');
    const code = await new Promise<number | null>((ok) => child.on('close', ok));
    const out = JSON.parse(stdout) as { interrupted: boolean; points: unknown[]; pointsRequested: number };
    expect(code).toBe(130);
    expect(out.interrupted).toBe(true);
    expect(out.points.length).toBeGreaterThan(0);
    expect(out.points.length).toBeLessThan(out.pointsRequested);
  }, 60_000);
});
