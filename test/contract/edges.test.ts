// One contract at every edge: a bad scenario gives the same paths and messages through the CLI
// (`flyclamp simulate bad.json`, exit 2) and the API (HTTP 400 body), and the sweep flags check
// units against the field in both. The page's share of this check lives with the browser tests.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createServer, type FlyclampServer } from '../../src/server/app.js';
import { formatIssues, validateScenario, type ValidationIssue } from '../../src/circuit/validate-scenario.js';
import type { ErrorResponse } from '../../src/contract/api.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const cli = join(root, 'dist', 'cli', 'main.js');
type Doc = Record<string, any>;

function runCli(args: readonly string[]): { status: number | null; stdout: string; stderr: string } {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8', timeout: 55_000 });
  if (result.error) throw result.error;
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

let work: string;
let server: FlyclampServer;
let listener: Server;
let base: string;
beforeAll(async () => {
  if (!existsSync(cli)) throw new Error(`${cli} is missing: run "npm run build" first (npm test does it)`);
  work = await mkdtemp(join(tmpdir(), 'flyclamp-contract-'));
  server = createServer({ scenariosDir: join(root, 'scenarios'), webDir: join(root, 'web'), maxConcurrentRuns: 1 });
  listener = server.app.listen(0, '127.0.0.1');
  await new Promise<void>((ok) => listener.once('listening', () => ok()));
  base = `http://127.0.0.1:${(listener.address() as AddressInfo).port}`;
});
afterAll(async () => {
  if (listener) { const closed = new Promise<void>((ok) => listener.close(() => ok())); listener.closeAllConnections(); await closed; }
  await server?.close();
  if (work) await rm(work, { recursive: true, force: true });
});

const demo = async (id: string): Promise<Doc> => JSON.parse(await readFile(join(root, 'scenarios', `${id}.json`), 'utf8')) as Doc;
const post = async (route: string, body: unknown): Promise<{ status: number; body: ErrorResponse }> => {
  const res = await fetch(`${base}${route}`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  return { status: res.status, body: (await res.json()) as ErrorResponse };
};

/** Bad scenarios, each with the path its main issue must name. */
const BAD: Array<[string, (d: Doc) => void, Array<string | number>]> = [
  ['a misspelt field', (d) => { d.transformer.leakageInductanse = '1.2u'; }, ['transformer', 'leakageInductanse']],
  ['a wrong unit', (d) => { d.transformer.magnetizingInductance = '60uF'; }, ['transformer', 'magnetizingInductance']],
  ['a missing required field', (d) => { delete d.switch.onResistance; }, ['switch', 'onResistance']],
  ['a bad curve point', (d) => { d.switch.drainCapacitance = [[0, '1n'], [0, '200p']]; }, ['switch', 'drainCapacitance', 1, 0]],
  ['two controls', (d) => { d.switch.dutyCycle = 0.2; }, ['switch', 'dutyCycle']],
  ['physics: leakage above magnetizing', (d) => { d.transformer.leakageInductance = d.transformer.magnetizingInductance; }, ['transformer', 'leakageInductance']],
];

describe('a bad scenario through the CLI and the API', () => {
  it.each(BAD)('%s: exit 2 with the same "path: message" lines as the 400 body', async (_what, mutate, pathKeys) => {
    const doc = await demo('bias-48v');
    mutate(doc);
    const expected = validateScenario(doc);
    expect(expected.ok).toBe(false);
    if (expected.ok) return;
    expect(expected.issues.map((i) => i.pathKeys)).toContainEqual(pathKeys);

    const file = join(work, 'bad.json');
    await writeFile(file, JSON.stringify(doc), 'utf8');
    const run = runCli(['simulate', file]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain(formatIssues(expected.issues));
    expect(run.stderr).not.toMatch(/\n\s+at /);

    const answer = await post('/api/simulate', { scenario: doc });
    expect(answer.status).toBe(400);
    expect(answer.body.issues).toEqual(expected.issues);
  });

  it('names request fields outside the scenario as body.… with their keys', async () => {
    const answer = await post('/api/simulate', { scenario: await demo('bias-48v'), variants: ['bare', 'bare'], colums: 100 });
    expect(answer.status).toBe(400);
    const issues: ValidationIssue[] = answer.body.issues ?? [];
    expect(issues.map((i) => [i.path, i.pathKeys])).toEqual([
      ['body.colums', ['body', 'colums']],
      ['body.variants', ['body', 'variants']],
    ].sort((a, b) => issues.findIndex((i) => i.path === a[0]) - issues.findIndex((i) => i.path === b[0])));
    expect(issues.find((i) => i.path === 'body.colums')?.message).toBe('unknown field (expected scenario, variants, window, columns, startStates)');
  });
});

describe('bundled scenarios through the API', () => {
  it('lists the scenarios without the JSON Schema beside them', async () => {
    const list = (await (await fetch(`${base}/api/scenarios`)).json()) as { scenarios: Array<{ id: string }> };
    expect(list.scenarios.map((s) => s.id).sort()).toEqual(['bias-48v', 'gate-drive-24v', 'mains-aux-12v']);
  });

  it('serves a scenario without its "$schema" line (it is for editors)', async () => {
    const folder = join(work, 'scenarios');
    await mkdir(folder, { recursive: true });
    // The bundled file names the schema itself; the served scenario must come without the line.
    const { $schema: _forEditors, ...fields } = await demo('bias-48v');
    await writeFile(join(folder, 'named.json'), JSON.stringify({ $schema: './scenario.schema.json', ...fields }), 'utf8');
    const other = createServer({ scenariosDir: folder, webDir: join(root, 'web'), maxConcurrentRuns: 1 });
    const otherListener = other.app.listen(0, '127.0.0.1');
    await new Promise<void>((ok) => otherListener.once('listening', () => ok()));
    try {
      const served = (await (await fetch(`http://127.0.0.1:${(otherListener.address() as AddressInfo).port}/api/scenarios/named`)).json()) as Doc;
      expect(served).toEqual(fields);
    } finally {
      const closed = new Promise<void>((ok) => otherListener.close(() => ok()));
      otherListener.closeAllConnections();
      await closed;
      await other.close();
    }
  });
});

describe('sweep ranges and tolerances are read in the field\'s unit', () => {
  const wrongUnit = 'transformer.leakageInductance=1uF..1.5uF';

  it('--vary with capacitance units on an inductance: exit 2 naming the flag, the field, its unit and what was found', () => {
    const run = runCli(['sweep', 'scenarios/bias-48v.json', '--vary', wrongUnit, '--workers', '0']);
    expect(run.status).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toContain(`--vary "${wrongUnit}"`);
    expect(run.stderr).toContain('expected FROM as a number in H');
    expect(run.stderr).toContain('found "1uF" (a value in F; transformer.leakageInductance is in H)');
  });

  it('the same range in the API: 400 at body.vary with the same words', async () => {
    const answer = await post('/api/sweep', { scenario: await demo('bias-48v'), vary: [wrongUnit] });
    expect(answer.status).toBe(400);
    expect(answer.body.issues).toEqual([{ path: 'body.vary', pathKeys: ['body', 'vary'], message: expect.stringContaining('found "1uF" (a value in F; transformer.leakageInductance is in H)') }]);
  });

  it('--tolerance with a unit instead of a percentage names the field\'s unit', () => {
    const run = runCli(['sweep', 'scenarios/bias-48v.json', '--samples', '4', '--tolerance', 'transformer.leakageInductance=±5uF', '--workers', '0']);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('--tolerance "transformer.leakageInductance=±5uF"');
    expect(run.stderr).toContain('found "5uF" (a value in F): transformer.leakageInductance is in H, and a tolerance is a percentage of it');
  });

  it('a field that is not a number (a share) is refused by name, not as "no field"', () => {
    const run = runCli(['sweep', 'scenarios/bias-48v.json', '--vary', 'design.lossBudget=1..2', '--workers', '0']);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('expected a numeric scenario field, found design.lossBudget, a share field');
  });

  it('the field\'s own unit and a plain SI prefix are both accepted', async () => {
    const { parseVary } = await import('../../src/study/study-spec.js');
    const nominal = (): number => 1.2e-6;
    expect(parseVary('transformer.leakageInductance=1uH..1.5u:2', nominal)).toEqual({ path: 'transformer.leakageInductance', from: 1e-6, to: 1.5e-6, steps: 2 });
  });
});
