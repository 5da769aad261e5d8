import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { captureCsv, scenarioFrom, syntheticCapture } from '../capture/synthetic-capture.js';

// The compiled CLI, as users run it (`npm test` builds first; for a bare vitest run, `npm run build`).
const root = fileURLToPath(new URL('../../', import.meta.url));
const cli = join(root, 'dist', 'cli', 'main.js');
const CLI_TIMEOUT_MS = 60_000;

interface CliResult { status: number | null; stdout: string; stderr: string }
function runCli(args: readonly string[]): CliResult {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8', timeout: CLI_TIMEOUT_MS - 5_000 });
  if (r.error) throw r.error;
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}
/** A Node stack frame (as in simulate-cli.test.ts). */
const STACK_FRAME = /\bat (?:async )?(?:[^\s()]+ )?\(?(?:file:\/\/|\/|[A-Za-z]:\\|node:)/;

// The board the captures come from, and a scenario 25 % low in leakage and 50 % high in Coss to start from.
const L = 400e-9, COSS = 330e-12, ADDED = 220e-12;
const boardJson = (leakage: number | string, coss: number | string, resistance: number): Record<string, unknown> => ({
  name: 'synthetic 30 V bias flyback',
  supply: { voltage: 30 },
  transformer: { magnetizingInductance: '20u', leakageInductance: leakage, turnsRatio: 1, primaryResistance: resistance },
  output: { voltage: 15, diodeDrop: 0.4 },
  switch: { frequency: '250k', peakCurrent: 0.9, drainCapacitance: coss, onResistance: '30m', voltageRating: 100 },
});
const scopeSettings = { sampleIntervalSeconds: 2.473e-9, spanSeconds: 10e-6, preTriggerFraction: 0.3, noiseVolts: 0.2, offsetVolts: 0.7, bits: 8, fullScaleMin: -10, fullScaleMax: 90 };

let dir: string, captureFile: string, withCapacitorFile: string, scenarioFile: string, samples: number;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'flyclamp-fit-cli-'));
  const capture = syntheticCapture(scenarioFrom(boardJson(L, COSS, 1.5)), 'bare', { ...scopeSettings, seed: 3 });
  samples = capture.volts.length;
  captureFile = join(dir, 'drain.csv');
  await writeFile(captureFile, captureCsv(capture));
  withCapacitorFile = join(dir, 'drain-220p.csv');
  await writeFile(withCapacitorFile, captureCsv(syntheticCapture(scenarioFrom(boardJson(L, COSS + ADDED, 1.5)), 'bare', { ...scopeSettings, seed: 4 })));
  scenarioFile = join(dir, 'board.json');
  await writeFile(scenarioFile, JSON.stringify(boardJson('300n', '495p', 0.5), null, 2));
});
afterAll(async () => { if (dir) await rm(dir, { recursive: true, force: true }); });

describe('flyclamp fit (compiled CLI)', () => {
  it('--json has exactly the names of issue 13, the fitted values within 2 %, and --out writes a valid fitted scenario', async () => {
    const out = join(dir, 'fitted.json');
    const r = runCli(['fit', captureFile, scenarioFile, '--column', 'CH1', '--json', '--out', out, '--with-capacitor', withCapacitorFile, '--added-capacitance', '220p']);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const json = JSON.parse(r.stdout) as Record<string, unknown>;
    // Issue 13, "fit --json (other tools read these names)".
    expect(Object.keys(json).sort()).toEqual(['addedCapacitor', 'captureSamples', 'fitted', 'residual', 'ringDecay', 'ringFrequency', 'uncertainty']);
    const keys = ['switch.drainCapacitance', 'transformer.leakageInductance', 'transformer.primaryResistance'];
    const fitted = json.fitted as Record<string, number>;
    const sigma = json.uncertainty as Record<string, number>;
    expect(Object.keys(fitted).sort()).toEqual(keys);
    expect(Object.keys(sigma).sort()).toEqual(keys);
    expect(json.captureSamples).toBe(samples);
    expect(Math.abs(fitted['transformer.leakageInductance']! / L - 1)).toBeLessThan(0.02);
    expect(Math.abs(fitted['switch.drainCapacitance']! / COSS - 1)).toBeLessThan(0.02);
    for (const k of keys) expect(sigma[k]).toBeGreaterThan(0);
    // The added-capacitor method sees the whole node; this board has no winding capacitance.
    const added = json.addedCapacitor as { leakageInductance: number; drainCapacitance: number };
    expect(Math.abs(added.drainCapacitance / COSS - 1)).toBeLessThan(0.01);
    expect(Math.abs(added.leakageInductance / L - 1)).toBeLessThan(0.01);
    const written = validateScenario(JSON.parse(await readFile(out, 'utf8')));
    expect(written.ok).toBe(true);
    if (written.ok) {
      expect(written.scenario.transformer.leakageInductance).toBe(fitted['transformer.leakageInductance']);
      expect(written.scenario.switch.drainCapacitance).toBe(fitted['switch.drainCapacitance']);
    }
  }, CLI_TIMEOUT_MS);

  it('on a Coss curve: the key switch.drainCapacitanceScale, and --out scales every point by it', async () => {
    const curve: Array<[number, number]> = [[0, 900e-12], [25, 420e-12], [100, 300e-12]];
    const curveScenario = join(dir, 'curve.json');
    await writeFile(curveScenario, JSON.stringify(boardJson('300n', 0, 0.5), (k, v: unknown) => (k === 'drainCapacitance' ? curve : v)));
    const out = join(dir, 'fitted-curve.json');
    const r = runCli(['fit', captureFile, curveScenario, '--column', 'CH1', '--json', '--out', out]);
    expect(r.status).toBe(0);
    const json = JSON.parse(r.stdout) as { fitted: Record<string, number>; uncertainty: Record<string, number> };
    // Issue 13: "(or a scale on a curve: "switch.drainCapacitanceScale")".
    expect(Object.keys(json.fitted).sort()).toEqual(['switch.drainCapacitanceScale', 'transformer.leakageInductance', 'transformer.primaryResistance']);
    expect(Object.keys(json.uncertainty)).toContain('switch.drainCapacitanceScale');
    const scale = json.fitted['switch.drainCapacitanceScale']!;
    const written = JSON.parse(await readFile(out, 'utf8')) as { switch: { drainCapacitance: Array<[number, number]> } };
    expect(written.switch.drainCapacitance.map(([v]) => v)).toEqual([0, 25, 100]);
    written.switch.drainCapacitance.forEach(([, c], i) => expect(Math.abs(c / (curve[i]![1] * scale) - 1)).toBeLessThan(1e-12));
  }, CLI_TIMEOUT_MS);

  it('refuses to write --out over an input, before any work, and leaves the input as it was', async () => {
    const before = await readFile(scenarioFile, 'utf8');
    const r = runCli(['fit', captureFile, scenarioFile, '--column', 'CH1', '--out', scenarioFile]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--out .*refusing to overwrite an input file/);
    expect(await readFile(scenarioFile, 'utf8')).toBe(before);
  });

  it.each([
    [['--column', 'CH9'], /--column \(in .*drain\.csv\): expected one of CH1, CH2 .*found "CH9"/],
    [[], /--column .*2 voltage columns/],
    [['--column', 'CH1', '--with-capacitor', 'x.csv'], /--with-capacitor: expected together with --added-capacitance/],
    [['--column', 'CH1', '--added-capacitance', '1n'], /--added-capacitance: expected together with --with-capacitor/],
    [['--column', 'CH1', '--with-capacitor', 'x.csv', '--added-capacitance', '10 apples'], /--added-capacitance: expected a positive capacitance .* found 10 apples/],
    [['--column', 'CH1', '--workers', 'many'], /--workers: expected a whole number from 0 to 64, found many/],
  ])('bad flags %j: exit 2, the flag named, no stack trace', (flags, message) => {
    const r = runCli(['fit', captureFile, scenarioFile, ...flags]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(STACK_FRAME);
  });

  it('bad files: a missing capture, a capture with no turn-off, a bad scenario: exit 2 naming the file', async () => {
    const flat = join(dir, 'flat.csv');
    await writeFile(flat, 'Time,CH1\n0,5\n1e-9,5\n2e-9,5\n');
    const badScenario = join(dir, 'bad.json');
    await writeFile(badScenario, JSON.stringify({ ...boardJson('300n', '495p', 0.5), supply: { voltage: 'lots' } }));
    const cases: Array<[string[], RegExp]> = [
      [['fit', join(dir, 'absent.csv'), scenarioFile], /absent\.csv: expected a readable capture file, found ENOENT/],
      [['fit', flat, scenarioFile], /flat\.csv: the drain voltage is constant/],
      [['fit', captureFile, badScenario, '--column', 'CH1'], /supply\.voltage/],
    ];
    for (const [args, message] of cases) {
      const r = runCli(args);
      expect(r.status).toBe(2);
      expect(r.stderr).toMatch(message);
      expect(r.stderr).not.toMatch(STACK_FRAME);
    }
  });
});
