import { describe, expect, it } from 'vitest';
import { execFile } from 'node:child_process';
import { mkdtemp, readFile, writeFile, readdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { handDesign, DesignImpossible } from '../../src/design/hand-design.js';
import { designClamp, preferredSplit, scenarioAtCorner } from '../../src/design/design-clamp.js';
import { designReportHtml } from '../../src/design/design-report-html.js';
import { designTable } from '../../src/cli/design-command.js';
import { roundToSeries, stepInSeries } from '../../src/equations/preferred-values.js';
import type { Scenario } from '../../src/circuit/scenario.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { variantMetrics } from '../../src/analysis/variant-metrics.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { ringFrequency } from '../../src/equations/ring-extraction.js';
import { labScenario } from '../support/lab-scenarios.js';

const run = promisify(execFile);

// The lab circuit set up so that the clamp target is exactly the worked check value:
// Vlimit = 0.8 × 312.5 V = 250 V, Vin = 100 V, Vf = 0 → Vc = 150 V; Llk = 10 µH (no spread),
// Ipk = 1 A, fsw = 100 kHz, VR = 100 V → R = 15 kΩ, P = 1.5 W (AN-4147 equations, from memory;
// the check values are the arithmetic of ../shared references).
const worked = (design: Record<string, unknown> = {}) => labScenario({
  switch: { voltageRating: 312.5 },
  // The worked values are for exact parts and no allowance.
  design: { leakageTolerance: 0, voltageAllowance: 0, resistorTolerance: 0, capacitorTolerance: 0, peakCurrentTolerance: 0, drainCapacitanceTolerance: 0, ...design },
});

describe('handDesign(scenario) against worked check values', () => {
  it('targets Vc = 150 V and finds R = 15 kΩ, then 15 kΩ in E24 (rounded down)', () => {
    const h = handDesign(worked());
    expect(h.clampVoltageTarget).toBeCloseTo(150, 9);
    expect(h.resistanceExact).toBeCloseTo(15e3, 6);
    expect(h.resistance).toBeCloseTo(15e3, 6);
    expect(h.equations.find((e) => e.quantity === 'clamp power')!.value).toBeCloseTo(1.5, 9);
  });

  it('with a Coss curve, the damper formulas take the node capacitance at Vin + VR off the curve (the single constant that errs least on the peak), winding capacitance included; the verification keeps the curve', () => {
    // Curve points chosen so that C(200 V) is exactly the 150 pF point: Vin + VR = 100 + 100 V.
    const curved = labScenario({ switch: { voltageRating: 312.5, drainCapacitance: [[0, '900p'], [200, '150p'], [400, '60p']] }, transformer: { windingCapacitance: '10p' }, design: { leakageTolerance: 0 } });
    const h = handDesign(curved);
    expect(h.drainCapacitance).toBeCloseTo(160e-12, 20);
    // Damper capacitor = ratio × that constant (Todd, SEM-900): 4 × 160 pF.
    expect(h.equations.find((e) => e.quantity === 'damper capacitor (exact)')!.value).toBeCloseTo(640e-12, 20);
    const corner = scenarioAtCorner(curved, h, h.nominal, { r: 15e3, c: 100e-9, rs: 300, cs: 640e-12 });
    expect(corner.switch.drainCapacitance).toEqual(curved.switch.drainCapacitance);
    expect(corner.transformer.windingCapacitance).toBe(10e-12);
  });

  it('adds an overload corner at the current limit plus its tolerance; with a load the sense tolerance moves only the limit', () => {
    const limited = handDesign(labScenario({ switch: { peakCurrentLimit: 1.3 }, design: { peakCurrentTolerance: 0.1 } }));
    const overload = limited.corners.find((c) => c.name.startsWith('overload'));
    expect(overload?.peakCurrent).toBeCloseTo(1.43, 12);
    expect(limited.worstCase.peakCurrent).toBeCloseTo(1.1, 12);
    // With output.power the regulated current is found at each corner (fromLoad), not scaled.
    const loaded = handDesign(labScenario({ switch: { peakCurrent: undefined, peakCurrentLimit: 1.3 }, output: { power: 8.5 }, design: { peakCurrentTolerance: 0.1 } }));
    expect(loaded.worstCase.fromLoad).toBe(true);
    expect(loaded.worstCase.peakCurrent).toBeCloseTo(Math.sqrt((2 * 8.5) / (200e-6 * 100e3 * 0.85)), 12);
    expect(loaded.corners.find((c) => c.name.startsWith('overload'))?.fromLoad).toBe(false);
  });

  it('splits a resistor into equal preferred parts whose total is the verified value within 1 % (IEC 60063 E24, then E96)', () => {
    expect(preferredSplit(5600, 2, 'E24')).toEqual({ value: 2800, total: 5600 });
    const r82 = preferredSplit(82, 2, 'E24');
    expect(Math.abs(r82.total / 82 - 1)).toBeLessThanOrEqual(0.01);
    // 3 × 3.3 kΩ = 9.9 kΩ is within 1 % of 10 kΩ: the design's own series stays.
    expect(preferredSplit(10e3, 3, 'E24')).toEqual({ value: 3300, total: 9900 });
  });

  it('rounds the resistor down and the capacitor up (both keep the drain lower)', () => {
    const h = handDesign(worked({ drainDerating: 0.81 }));
    expect(h.resistance).toBeLessThanOrEqual(h.resistanceExact);
    expect(h.capacitance).toBeGreaterThanOrEqual(h.capacitanceExact);
    // Ripple at most the maximum asked for: ΔVc/Vc = 1/(R·C·fsw) (AN-4147, from memory).
    expect(1 / (h.resistance * h.capacitance * 1e5)).toBeLessThanOrEqual(h.targets.clampRippleMaximum + 1e-12);
  });

  it('designs the damper at the characteristic impedance and a few times Coss (Todd SEM-900; Severns)', () => {
    const h = handDesign(worked());
    expect(h.damper.resistanceExact).toBeCloseTo(Math.sqrt(10e-6 / 10e-12), 6); // 1 kΩ
    expect(h.damper.capacitanceExact).toBeCloseTo(4 * 10e-12, 20);
  });

  it('uses the measured ring instead of the scenario values (added-capacitor method, Todd SEM-900)', () => {
    // L = 10 µH, Cp = 100 pF ring at 5.033 MHz; 300 pF added halves it.
    const f1 = ringFrequency(10e-6, 100e-12), f2 = ringFrequency(10e-6, 400e-12);
    const h = handDesign(worked({ measuredRing: { frequency: f1, frequencyWithAddedCapacitor: f2, addedCapacitance: 300e-12 } }));
    expect(h.extracted!.drainCapacitance).toBeCloseTo(100e-12, 20);
    expect(h.extracted!.leakageInductance).toBeCloseTo(10e-6, 15);
    expect(h.drainCapacitance).toBeCloseTo(100e-12, 20);
  });

  it('refuses a rating that leaves no room for the clamp above VR, saying why', () => {
    expect(() => handDesign(worked({ drainDerating: 0.6 }))).toThrow(DesignImpossible);
    expect(() => handDesign(worked({ drainDerating: 0.6 }))).toThrow(/no room for a clamp above VR/);
  });
});

const gateDrive = async (design: Record<string, unknown> = {}): Promise<{ raw: Record<string, unknown>; scenario: Scenario }> => {
  const raw = JSON.parse(await readFile('scenarios/gate-drive-24v.json', 'utf8')) as Record<string, unknown>;
  raw.design = design;
  const validated = validateScenario(raw);
  if (!validated.ok) throw new Error(validated.issues.map((i) => `${i.path}: ${i.message}`).join('; '));
  return { raw, scenario: validated.scenario };
};

describe('designClamp(scenario) verification', () => {
  it('every corner, the lowest and highest input among them, is rerun here at its parts: its peak against the derated limit less the allowance gives the corner\'s verdict, and the verdict needs them all', async () => {
    const { scenario: s } = await gateDrive({ inputVoltageMinimum: 18, inputVoltageMaximum: 30, leakageTolerance: 0.2, voltageAllowance: '4%', lossBudget: '100%', damper: 'always' });
    const d = await designClamp(s);
    expect(d.allowance).toBeCloseTo(0.04 * s.switch.voltageRating, 12);
    expect(d.damperFitted).toBe(true);
    const inputs = d.corners.map((c) => c.inputVoltage);
    expect(Math.min(...inputs)).toBe(18);
    expect(Math.max(...inputs)).toBe(30);
    const parts = { r: d.clamp.resistance, c: d.clamp.capacitance, rs: d.damper.resistance, cs: d.damper.capacitance };
    const limit = d.hand.deratedLimit - d.allowance;
    d.hand.corners.forEach((corner, i) => {
      const direct = scenarioAtCorner(s, d.hand, corner, parts);
      const peaks = (['clamp', 'damped'] as const).map((v) => variantMetrics(runVariant(direct, v), s.switch.voltageRating).peakDrainVoltage);
      const worst = Math.max(...peaks);
      expect(worst <= limit, corner.name).toBe(d.corners[i]!.pass);
      expect(Math.abs(worst - d.corners[i]!.peakDrainVoltage), corner.name).toBeLessThan(1e-9);
    });
    const least = d.corners.reduce((a, b) => (b.peakDrainVoltage > a.peakDrainVoltage ? b : a));
    expect(d.limitingCorner).toBe(least.name);
    expect(d.pass).toBe(d.corners.every((c) => c.pass) && d.losses.pass);
  }, 180_000);

  it('a design that passes keeps every corner\'s peak ≤ limit − allowance when `flyclamp simulate` reruns it from the corner\'s values in a scenario file', async () => {
    const { raw, scenario: s } = await gateDrive({ inputVoltageMinimum: 20, inputVoltageMaximum: 28 });
    const d = await designClamp(s);
    expect(d.pass).toBe(true);
    const limit = d.hand.deratedLimit - d.allowance;
    const dir = await mkdtemp(join(tmpdir(), 'flyclamp-corners-'));
    const sw = raw.switch as Record<string, unknown>;
    for (const [i, c] of d.corners.entries()) {
      // The corner as a user would write it: the file's values replaced by the corner's.
      const coss = sw.drainCapacitance;
      const scaledCoss = typeof coss === 'number' || typeof coss === 'string'
        ? s.switch.drainCapacitance as number * c.partValues.drainCapacitanceFactor
        : (s.switch.drainCapacitance as ReadonlyArray<readonly [number, number]>).map(([v, cap]) => [v, cap * c.partValues.drainCapacitanceFactor]);
      const cornerFile = {
        ...raw, design: undefined,
        supply: { voltage: c.inputVoltage },
        transformer: { ...(raw.transformer as object), leakageInductance: c.leakageInductance },
        // Fixed duty keeps its duty cycle (the corner's current follows from it); peak-current control takes the corner's current.
        switch: { ...sw, ...(sw.peakCurrent === undefined ? {} : { peakCurrent: c.peakCurrent }), drainCapacitance: scaledCoss },
        clamp: { ...(raw.clamp as object), resistance: c.partValues.clampResistance, capacitance: c.partValues.clampCapacitance, diodeDrop: d.clamp.diodeDrop },
        damper: { resistance: c.partValues.damperResistance, capacitance: c.partValues.damperCapacitance },
      };
      const file = join(dir, `corner-${i}.json`);
      await writeFile(file, JSON.stringify(cornerFile));
      const report = JSON.parse((await run(process.execPath, ['dist/cli/main.js', 'simulate', file, '--json'], { maxBuffer: 64 << 20 })).stdout) as { variants: Record<string, { peakDrainVoltage: number }> };
      const built = d.damperFitted ? ['clamp', 'damped'] : ['clamp'];
      const peak = Math.max(...built.map((v) => report.variants[v]!.peakDrainVoltage));
      expect(peak, c.name).toBeLessThanOrEqual(limit);
      // The same circuit as the design verified (same values, same engine): the same peak to rounding.
      expect(Math.abs(peak - c.peakDrainVoltage), c.name).toBeLessThan(1e-6);
    }
  }, 180_000);

  it('a design over its loss budget fails and says why; the same design under a generous budget passes the loss check', async () => {
    const tight = await designClamp((await gateDrive({ lossBudget: '0.5%' })).scenario);
    expect(tight.losses.pass).toBe(false);
    expect(tight.pass).toBe(false);
    expect(tight.notes.join(' ')).toMatch(/over the budget/);
    // Loss = clamp resistor + clamp diode (+ damper resistor when fitted) of the built design at the worst-loss corner.
    expect(tight.losses.total).toBeCloseTo(tight.losses.clamp + tight.losses.damper, 12);
    expect(tight.losses.share).toBeCloseTo(tight.losses.total / tight.losses.outputPower, 12);
    const generous = await designClamp((await gateDrive({ lossBudget: 1e3 })).scenario);
    expect(generous.losses.budget).toBe(1e3);
    expect(generous.losses.pass).toBe(true);
  }, 180_000);

  it('with the load given, each corner settles its peak current on it: in DCM the energy relation P = ½·Lm·Ipk²·fsw·η within 2 % (any power-electronics text; the rest is the magnetizing current still rising while Coss charges)', async () => {
    const loaded = labScenario({ switch: { peakCurrent: undefined, peakCurrentLimit: 1.4 }, output: { power: 8.5 }, design: { inputVoltageMinimum: 90, inputVoltageMaximum: 110 } });
    const d = await designClamp(loaded);
    const fromLoad = d.corners.filter((c) => !c.name.startsWith('overload'));
    expect(fromLoad.length).toBeGreaterThanOrEqual(3);
    const formula = Math.sqrt((2 * 8.5) / (200e-6 * 100e3 * 0.85));
    for (const c of fromLoad) expect(Math.abs(c.peakCurrent / formula - 1), c.name).toBeLessThan(0.02);
    // The overload corner runs at the current limit plus the sense tolerance, whatever the load.
    expect(d.corners.find((c) => c.name.startsWith('overload'))!.peakCurrent).toBeCloseTo(1.4 * 1.07, 12);
  }, 180_000);

  it('a resistor split into series parts is verified at the total built: the split\'s total is the verified value', async () => {
    // About 11 W in the clamp resistor: more than one 5 W part carries at 50 °C, so it is split.
    const d = await designClamp(labScenario({ switch: { peakCurrent: 2 }, transformer: { leakageInductance: '20u' } }));
    const splits = d.stresses.filter((x) => x.preferredPerResistor);
    expect(splits.map((x) => x.part)).toContain('clamp resistor');
    for (const stress of splits) {
      const verified = stress.part === 'clamp resistor' ? d.corners[0]!.partValues.clampResistance / d.hand.corners[0]!.resistanceFactor : d.corners[0]!.partValues.damperResistance;
      const arrangement = stress.arrangement!;
      if (!arrangement.ok) throw new Error(`${stress.part}: no arrangement`);
      expect(stress.preferredPerResistor!.value * arrangement.count, stress.part).toBeCloseTo(verified, 9);
      expect(stress.preferredPerResistor!.total, stress.part).toBeCloseTo(verified, 9);
      // The parts are preferred values (E24 or, where no E24 value divides the total, E96: IEC 60063).
      expect(stepInSeries(stress.preferredPerResistor!.value, 'E96', 0)).toBeCloseTo(stress.preferredPerResistor!.value, 9);
    }
    expect(d.clamp.resistance).toBeCloseTo(d.corners[0]!.partValues.clampResistance / d.hand.corners[0]!.resistanceFactor, 9);
  }, 120_000);
});

describe('the search for the cheapest parts that pass', () => {
  it('finds the least-loss passing clamp set of a small grid, as an exhaustive search of that grid by simulation does', async () => {
    const { scenario: s } = await gateDrive({ lossBudget: '100%', damper: 'never' });
    const d = await designClamp(s);
    const t = d.hand.targets;
    const limit = d.hand.deratedLimit - d.allowance;
    // The grid: clamp resistors from three E24 steps below the hand value to five above, each with
    // the ripple rule's capacitor (IEC 60063 E12, rounded up) and one or two E12 steps larger while the
    // ripple stays at or above the minimum; every set simulated here at the worst case.
    let best: { loss: number; r: number; c: number } | null = null;
    for (let level = -3; level <= 5; level++) {
      const r = stepInSeries(d.hand.resistance, t.resistorSeries, level);
      const ruled = roundToSeries(1 / (t.clampRippleMaximum * r * s.switch.frequency * (1 - t.capacitorTolerance)), t.capacitorSeries, 'up');
      for (let step = 0; step <= 2; step++) {
        const c = step === 0 ? ruled : stepInSeries(ruled, t.capacitorSeries, step);
        if (step > 0 && 1 / (r * c * s.switch.frequency) < t.clampRippleMinimum) continue;
        const m = variantMetrics(runVariant(scenarioAtCorner(s, d.hand, d.hand.worstCase, { r, c, rs: 1, cs: 1e-12 }), 'clamp'), s.switch.voltageRating);
        const loss = m.clampResistorPower! + m.clampDiodePower!;
        if (m.settled && m.peakDrainVoltage <= limit && (best === null || loss < best.loss)) best = { loss, r, c };
      }
    }
    expect(best).not.toBeNull();
    // The optimum lies inside the grid, not on its edge (else the grid would be too small to judge).
    expect(best!.r).toBeLessThan(stepInSeries(d.hand.resistance, t.resistorSeries, 5));
    expect(d.damperFitted).toBe(false);
    expect(d.clamp.resistance).toBe(best!.r);
    expect(d.clamp.capacitance).toBe(best!.c);
    expect(d.losses.pass).toBe(true);
    // Fewer simulations than the exhaustive grid took.
    expect(d.search.clampSets).toBeLessThan(9 * 3);
  }, 240_000);

  it('"no damper" is an outcome: chosen when a set without one passes with less loss, and said so in the JSON, the table and the report; design.damper "always" fits one', async () => {
    const { scenario: s } = await gateDrive();
    const none = await designClamp(s);
    const chosen = none.candidates[none.chosenCandidate]!;
    expect(chosen.damper).toBeNull();
    expect(chosen.pass).toBe(true);
    expect(none.damperFitted).toBe(false);
    // Least loss among the passing candidates, with a damper or without.
    const passing = none.candidates.filter((c) => c.pass);
    expect(chosen.totalLoss).toBe(Math.min(...passing.map((c) => c.totalLoss)));
    expect(passing.some((c) => c.damper !== null)).toBe(true);
    // The loss verdict is on the circuit built: no damper loss.
    expect(none.losses.damper).toBe(0);
    expect(designTable(none)).toMatch(/no damper \(leave the damper block out/);
    expect(designReportHtml(s, none, none.plots)).toMatch(/<b>No damper<\/b>/);

    const fitted = await designClamp((await gateDrive({ damper: 'always' })).scenario);
    expect(fitted.damperFitted).toBe(true);
    const withDamper = fitted.candidates[fitted.chosenCandidate]!;
    expect(withDamper.damper).toEqual(fitted.damper);
    expect(fitted.losses.damper).toBeGreaterThan(0);
    expect(fitted.losses.total).toBeGreaterThan(none.losses.total);
    expect(designTable(fitted)).toMatch(/"damper": \{/);
  }, 240_000);

  it('the simulations on worker processes give the same design as one after another in this process', async () => {
    const { scenario: s } = await gateDrive();
    const [alone, pooled] = [await designClamp(s, { workers: 0 }), await designClamp(s, { workers: 2 })];
    expect(pooled.search.workers).toBe(2);
    // Everything but the runs' wall times (the work counts included) is the same to the last bit.
    const withoutTimes = (d: object): unknown => JSON.parse(JSON.stringify(d, (k, v: unknown) => (k === 'wallTimeMs' ? undefined : v)));
    expect(withoutTimes({ ...pooled, search: { ...pooled.search, workers: 0 } })).toEqual(withoutTimes(alone));
  }, 240_000);
});

describe('flyclamp design (CLI)', () => {
  it('--json gives clamp and damper blocks that paste into a scenario, and verification per corner', async () => {
    const out = JSON.parse((await run(process.execPath, ['dist/cli/main.js', 'design', 'scenarios/gate-drive-24v.json', '--json'])).stdout) as {
      clamp: Record<string, number>; damper: Record<string, number>;
      verification: Record<'worstCase' | 'nominal', { pass: boolean; margin: number; variants: Record<string, { peakDrainVoltage: number; settled: boolean }> }>;
    };
    const raw = JSON.parse(await readFile('scenarios/gate-drive-24v.json', 'utf8')) as Record<string, unknown>;
    const pasted = validateScenario({ ...raw, clamp: out.clamp, damper: out.damper });
    expect(pasted.ok).toBe(true);
    for (const corner of ['worstCase', 'nominal'] as const) {
      const c = out.verification[corner];
      expect(typeof c.pass).toBe('boolean');
      expect(Number.isFinite(c.margin)).toBe(true);
      // The bare circuit only where the plot needs it: the worst case.
      expect(Object.keys(c.variants)).toEqual(corner === 'worstCase' ? ['bare', 'clamp', 'damped'] : ['clamp', 'damped']);
      expect(c.variants.clamp!.settled).toBe(true);
    }
  }, 60_000);

  it('a design stopped at its --max-seconds deadline while its worker processes run says so in one line: no stack trace from a worker whose parent left', async () => {
    // The estimate lets 6 s through for this demo; on this machine class the design takes longer, so the deadline stops it mid-search.
    const result = await run(process.execPath, ['dist/cli/main.js', 'design', 'scenarios/bias-48v.json', '--max-seconds', '6']).then(
      (r) => ({ code: 0, stderr: r.stderr }), (e: { code: number; stderr: string }) => ({ code: e.code, stderr: e.stderr }));
    expect([0, 1]).toContain(result.code);
    expect(result.stderr).not.toMatch(/EPIPE|\n\s+at |Unhandled/);
    if (result.code === 1) expect(result.stderr.trim()).toMatch(/^flyclamp: simulation failed: .*--max-seconds 6/);
    // Give a killed child a moment to report, had it anything to say.
    await new Promise((ok) => setTimeout(ok, 500));
  }, 60_000);

  it('--report writes a self-contained HTML report (no external resources) and never over the input', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'flyclamp-design-'));
    const scenarioFile = join(dir, 'bias.json');
    await writeFile(scenarioFile, await readFile('scenarios/bias-48v.json', 'utf8'));
    const report = join(dir, 'report.html');
    await run(process.execPath, ['dist/cli/main.js', 'design', scenarioFile, '--report', report]);
    const html = await readFile(report, 'utf8');
    for (const section of ['Inputs, as written', 'Hand design (the starting point)', 'Candidates, side by side', 'Chosen parts', 'Part stresses', 'Corners: verification by settled simulation', 'Loss budget', 'At turn-off', '<svg', 'not compliance evidence']) expect(html).toContain(section);
    // The inputs as the file writes them, SI prefixes and all.
    for (const written of ['<code>60u</code>', '<code>1.2u</code>', '<code>200k</code>', '[[0,&quot;850p&quot;],[10,&quot;420p&quot;]']) expect(html).toContain(written);
    // Two plots: the turn-off (time in ns after the switch opens) and the whole recording.
    expect(html.match(/<svg /g)).toHaveLength(2);
    expect(html).toContain('ns after the switch opens');
    expect(html).not.toMatch(/<script|src="http|href="http|<link /);
    expect((await readdir(dir)).sort()).toEqual(['bias.json', 'report.html']);

    const before = await readFile(scenarioFile, 'utf8');
    const refused = await run(process.execPath, ['dist/cli/main.js', 'design', scenarioFile, '--report', scenarioFile.replace(/json$/, 'json')]).then(() => null, (e: { code: number; stderr: string }) => e);
    // The input does not end in .html, so the name is refused before anything else.
    expect(refused?.code).toBe(2);
    const renamed = join(dir, 'bias.html');
    await writeFile(renamed, before);
    const overInput = await run(process.execPath, ['dist/cli/main.js', 'design', renamed, '--report', renamed]).then(() => null, (e: { code: number; stderr: string }) => e);
    expect(overInput?.code).toBe(2);
    expect(overInput?.stderr).toMatch(/refusing to overwrite an input/);
    expect(await readFile(renamed, 'utf8')).toBe(before);
  }, 60_000);
});
