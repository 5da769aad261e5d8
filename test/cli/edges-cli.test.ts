import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { lstat, mkdir, mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

// The compiled CLI at the edges users reach: output paths, budgets, pipes, results that must be finite.
const root = fileURLToPath(new URL('../../', import.meta.url));
const cli = join(root, 'dist', 'cli', 'main.js');
const CLI_TIMEOUT_MS = 60_000;
const STACK_FRAME = /\bat (?:async )?(?:[^\s()]+ )?\(?(?:file:\/\/|\/|[A-Za-z]:\\|node:)/;

type Doc = Record<string, any>;
interface CliResult { status: number | null; stdout: string; stderr: string; ms: number }

function runCli(args: readonly string[]): CliResult {
  const started = performance.now();
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8', timeout: CLI_TIMEOUT_MS - 5_000, maxBuffer: 64 * 1024 * 1024 });
  if (result.error) throw result.error;
  return { status: result.status, stdout: result.stdout, stderr: result.stderr, ms: performance.now() - started };
}
const demo = async (id: string): Promise<Doc> => JSON.parse(await readFile(join(root, 'scenarios', `${id}.json`), 'utf8')) as Doc;

let work: string;
beforeAll(async () => {
  if (!existsSync(cli)) throw new Error(`${cli} is missing: run "npm run build" first (npm test does it)`);
  work = await mkdtemp(join(tmpdir(), 'flyclamp-edges-'));
});
afterAll(async () => { if (work) await rm(work, { recursive: true, force: true }); });

async function scenarioFile(name: string, doc: Doc): Promise<string> {
  const file = join(work, `${name}.json`);
  await writeFile(file, JSON.stringify(doc), 'utf8');
  return file;
}

describe('output paths are checked before any work', () => {
  it('--csv to a FIFO, a device and a directory exits 2 naming what it found, before simulating, and leaves them as they were', async () => {
    const fifo = join(work, 'pipe');
    execFileSync('mkfifo', [fifo]);
    const dir = join(work, 'a-folder');
    await mkdir(dir);
    for (const [target, kind] of [[fifo, 'a FIFO'], ['/dev/null', 'a device'], [dir, 'a directory']] as const) {
      const { status, stdout, stderr } = runCli(['simulate', 'scenarios/bias-48v.json', '--csv', target]);
      expect(status, target).toBe(2);
      expect(stderr, target).toContain(`--csv ${target}: expected a regular file or a new file name, found ${kind}`);
      expect(stdout, target).toBe(''); // the table comes after the simulation: none ran
    }
    expect((await lstat(fifo)).isFIFO()).toBe(true);
    expect((await lstat('/dev/null')).isCharacterDevice()).toBe(true);
    expect(await readdir(dir)).toEqual([]);
  }, CLI_TIMEOUT_MS);

  it('--csv and --report into a missing folder exit 2 before any work, naming the folder', () => {
    const missing = join(work, 'nowhere');
    const simulate = runCli(['simulate', 'scenarios/bias-48v.json', '--csv', join(missing, 'w.csv')]);
    expect(simulate.status).toBe(2);
    expect(simulate.stdout).toBe('');
    expect(simulate.stderr).toContain(`expected an existing folder, found ENOENT for ${missing}`);
    const design = runCli(['design', 'scenarios/bias-48v.json', '--report', join(missing, 'r.html')]);
    expect(design.status).toBe(2);
    expect(design.stdout).toBe('');
    expect(design.stderr).toContain(`--report ${join(missing, 'r.html')}: expected an existing folder`);
  }, CLI_TIMEOUT_MS);

  it('a FIFO or a directory given as the scenario exits 2 at once rather than waiting for a writer', async () => {
    const fifo = join(work, 'scenario-pipe');
    execFileSync('mkfifo', [fifo]);
    for (const [input, kind] of [[fifo, 'a special file'], [work, 'a directory']] as const) {
      const { status, stderr } = runCli(['simulate', input]);
      expect(status, input).toBe(2);
      expect(stderr).toContain(`${input}: expected a regular scenario file, found ${kind}`);
    }
  }, CLI_TIMEOUT_MS);
});

describe('scenario files', () => {
  it('a field given twice exits 2 naming it, rather than keeping the last value silently', async () => {
    const text = (await readFile(join(root, 'scenarios', 'bias-48v.json'), 'utf8')).replace('"leakageInductance": "1.2u",', '"leakageInductance": "1.2u", "leakageInductance": "12u",');
    const file = join(work, 'twice.json');
    await writeFile(file, text, 'utf8');
    const { status, stdout, stderr } = runCli(['simulate', file]);
    expect(status).toBe(2);
    expect(stdout).toBe('');
    expect(stderr).toMatch(/^transformer\.leakageInductance: expected each field once in its block/m);
  }, CLI_TIMEOUT_MS);
});

describe('the work budget', () => {
  it('a 150 Hz switch against a 10 MHz ring exits 1 before simulating, naming switch.frequency and --max-seconds', async () => {
    const doc = await demo('bias-48v');
    doc.switch.frequency = 150;
    doc.switch.peakCurrent = 0.01;
    const { status, stdout, stderr } = runCli(['simulate', await scenarioFile('slow-switch', doc), '--json']);
    expect(status).toBe(1);
    expect(stdout).toBe('');
    expect(stderr).toMatch(/^switch\.frequency: expected a scenario that runs within 120 s, found 150 Hz \(typical: 20000–2000000 Hz; a wrong SI prefix\?\)/m);
    expect(stderr).toMatch(/pass --max-seconds \d+ to run it anyway/);
    expect(stderr).not.toMatch(STACK_FRAME);
  }, CLI_TIMEOUT_MS);

  it('a 1 fF drain capacitance is refused naming switch.drainCapacitance; --max-seconds that is not a number exits 2', async () => {
    // The constant-part demo: in the others a winding capacitance would stand beside the 1 fF.
    const doc = await demo('gate-drive-24v');
    doc.switch.drainCapacitance = '1f';
    const file = await scenarioFile('tiny-coss', doc);
    const refused = runCli(['simulate', file]);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toMatch(/^switch\.drainCapacitance: expected a scenario that runs within 120 s, found 1e-15 F/m);
    const bad = runCli(['simulate', file, '--max-seconds', 'soon']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('--max-seconds: expected a number of seconds above 0');
  }, CLI_TIMEOUT_MS);

  it('a run that overruns --max-seconds stops with exit 1 naming the budget', async () => {
    const doc = await demo('mains-aux-12v');
    // Within the estimate, but about 300 cycles at the tightest tolerances (see test/server).
    doc.simulation = { settleTolerance: 1e-12, relativeTolerance: 1e-12, maxCycles: 100_000 };
    const { status, stderr } = runCli(['simulate', await scenarioFile('overrun', doc), '--variant', 'bare', '--max-seconds', '1']);
    expect(status).toBe(1);
    expect(stderr).toMatch(/bare: the run took longer than its time cap .*--max-seconds 1: pass a larger value/);
  }, CLI_TIMEOUT_MS);
});

describe('results are finite and checked, or a failure with the reason', () => {
  it('a 1e-18 Ω damper exits 1 before simulating, naming damper.resistance (its RC is far below a femtosecond)', async () => {
    const doc = await demo('bias-48v');
    doc.damper.resistance = 1e-18;
    const { status, stdout, stderr } = runCli(['simulate', await scenarioFile('tiny-damper', doc), '--json']);
    expect(status).toBe(1);
    expect(stdout).toBe('');
    expect(stderr).toMatch(/^damper\.resistance: expected a scenario that runs within 120 s, found 1e-18 Ω \(typical: 1–10000 Ω; a wrong SI prefix\?\): .*periods of the damper RC/m);
  }, CLI_TIMEOUT_MS);

  it('a 68 fF damper capacitor (a prefix off) is refused naming damper.capacitance, while --variant clamp, which has no damper, runs', async () => {
    const doc = await demo('bias-48v');
    doc.damper.capacitance = 6.8e-14;
    const file = await scenarioFile('tiny-damper-capacitor', doc);
    const all = runCli(['simulate', file, '--max-seconds', '3']);
    expect(all.status).toBe(1);
    expect(all.stderr).toMatch(/^damper\.capacitance: expected a scenario that runs within 3 s, found 6\.8e-14 F/m);
    const clampOnly = runCli(['simulate', file, '--variant', 'clamp', '--json', '--max-seconds', '3']);
    expect(clampOnly.status).toBe(0);
    expect(Object.keys((JSON.parse(clampOnly.stdout) as Doc).variants)).toEqual(['clamp']);
  }, CLI_TIMEOUT_MS);
});

describe('output through pipes', () => {
  it('a 200 kB JSON with a non-zero exit arrives whole through a pipe', async () => {
    // Every point invalid (a duty with no steady state): a large JSON, at once, and exit 1.
    const { status, stdout, stderr } = runCli(['sweep', 'scenarios/gate-drive-24v.json', '--vary', 'switch.dutyCycle=0.6..0.9:600', '--json', '--workers', '0']);
    expect(status).toBe(1);
    expect(stderr).toContain('every one of the 600 points failed');
    expect(stdout.length).toBeGreaterThan(200 * 1024);
    const out = JSON.parse(stdout) as { points: Array<{ failure?: string }> };
    expect(out.points).toHaveLength(600);
    expect(out.points.every((p) => /switch\.dutyCycle/.test(p.failure ?? ''))).toBe(true);
  }, CLI_TIMEOUT_MS);
});

describe('flyclamp sweep', () => {
  it('checks every point against the work budget before any runs, naming the point and the value', () => {
    const { status, stdout, stderr } = runCli(['sweep', 'scenarios/bias-48v.json', '--vary', 'switch.frequency=200..200k:3', '--workers', '0']);
    expect(status).toBe(1);
    expect(stdout).toBe('');
    expect(stderr).toMatch(/^switch\.frequency: expected a scenario that runs within 120 s, found 200 Hz .*\(at point 1: switch\.frequency = 200 Hz; the budget is per variant\)$/m);
  }, CLI_TIMEOUT_MS);

  it('reports the base scenario\'s rating and derated limit, not the last point\'s', async () => {
    const { status, stdout } = runCli(['sweep', 'scenarios/bias-48v.json', '--vary', 'switch.voltageRating=150..300:2', '--json', '--workers', '0']);
    expect(status).toBe(0);
    const out = JSON.parse(stdout) as { voltageRating: number; deratedLimit: number; points: Array<{ values: Record<string, number> }> };
    expect(out.points.map((p) => p.values['switch.voltageRating'])).toEqual([150, 300]);
    expect(out.voltageRating).toBe(150);
    expect(out.deratedLimit).toBeCloseTo(0.8 * 150, 9);
  }, CLI_TIMEOUT_MS);
});
