import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFile } from 'node:child_process';
import { readFile } from 'node:fs/promises';
import { promisify } from 'node:util';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { createServer, type FlyclampServer } from '../../src/server/app.js';

const run = promisify(execFile);

interface Started { base: string; server: FlyclampServer; listener: Server }

async function start(options: Partial<Parameters<typeof createServer>[0]> = {}): Promise<Started> {
  const server = createServer({ scenariosDir: 'scenarios', webDir: 'web', readmeFile: 'README.md', ...options });
  const listener = server.app.listen(0, '127.0.0.1');
  await new Promise<void>((ok) => listener.once('listening', () => ok()));
  return { base: `http://127.0.0.1:${(listener.address() as AddressInfo).port}`, server, listener };
}
async function stop(s: Started): Promise<void> {
  // fetch keeps connections alive; close() alone would wait for them to time out.
  const closed = new Promise<void>((ok) => s.listener.close(() => ok()));
  s.listener.closeAllConnections();
  await closed;
  await s.server.close();
}
const post = (base: string, body: unknown): Promise<Response> =>
  fetch(`${base}/api/simulate`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
const demo = async (id: string): Promise<Record<string, unknown>> => JSON.parse(await readFile(`scenarios/${id}.json`, 'utf8')) as Record<string, unknown>;

type Metrics = Record<string, unknown> & { stats: unknown };
const withoutTimings = (variants: Record<string, Metrics>): Record<string, unknown> =>
  Object.fromEntries(Object.entries(variants).map(([k, { stats: _stats, ...m }]) => [k, m]));

describe('HTTP API', () => {
  let s: Started;
  beforeAll(async () => { s = await start(); });
  afterAll(async () => { await stop(s); });

  it('GET /api/scenarios lists the bundled scenarios; GET /api/scenarios/:id returns one, 404 for an unknown id', async () => {
    const list = await (await fetch(`${s.base}/api/scenarios`)).json() as { scenarios: Array<{ id: string; name: string }> };
    expect(list.scenarios.map((x) => x.id)).toEqual(expect.arrayContaining(['bias-48v', 'mains-aux-12v', 'gate-drive-24v']));
    const one = await (await fetch(`${s.base}/api/scenarios/bias-48v`)).json() as { name: string };
    expect(one.name).toBe((await demo('bias-48v')).name);
    expect((await fetch(`${s.base}/api/scenarios/no-such`)).status).toBe(404);
    expect((await fetch(`${s.base}/api/scenarios/..%2Fpackage`)).status).toBe(404);
  });

  it('POST /api/simulate gives the same metrics as `flyclamp simulate --json` for a demo scenario', async () => {
    const res = await post(s.base, { scenario: await demo('gate-drive-24v') });
    expect(res.status).toBe(200);
    const body = await res.json() as { report: { variants: Record<string, Metrics> }; traces: Record<string, { drainVoltage: { values: number[] } }> };
    const cli = await run(process.execPath, ['dist/cli/main.js', 'simulate', 'scenarios/gate-drive-24v.json', '--json']);
    const expected = JSON.parse(cli.stdout) as { variants: Record<string, Metrics> };
    expect(Object.keys(body.report.variants)).toEqual(['bare', 'clamp', 'damped']);
    // The same settled orbit, one recorded cycle each (the server repeats it for the plot): the
    // same cycle counts, numbers within the settle tolerance (1e-5; the server's variants run in
    // separate workers); verdicts and names are identical.
    for (const [variant, served] of Object.entries(withoutTimings(body.report.variants))) {
      const printed = withoutTimings(expected.variants)[variant] as Record<string, unknown>;
      expect(Object.keys(served as object).sort()).toEqual(Object.keys(printed).sort());
      for (const [name, value] of Object.entries(served as Record<string, unknown>)) {
        const other = printed[name];
        if (typeof value === 'number' && typeof other === 'number') expect(Math.abs(value - other), `${variant}.${name}`).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(value)));
        else if (typeof value !== 'object' || value === null) expect(other, `${variant}.${name}`).toEqual(value);
      }
    }
    // The display trace's highest point is a grid sample: at most the exact peak, and close to it.
    const peak = body.report.variants.bare!.peakDrainVoltage as number;
    const shown = Math.max(...body.traces.bare!.drainVoltage.values);
    expect(shown).toBeLessThanOrEqual(peak + 1e-9);
    expect(shown).toBeGreaterThan(0.98 * peak);
  }, 60_000);

  it('POST /api/simulate answers each settled variant\'s startStates; an edit sent with them settles on the answer a cold request gives', async () => {
    type Answer = { report: { variants: Record<string, { peakDrainVoltage: number; clampVoltageMean?: number; settled: boolean }> }; startStates: Record<string, number[]> };
    const scenario = await demo('gate-drive-24v');
    const first = await (await post(s.base, { scenario })).json() as Answer;
    expect(Object.keys(first.startStates)).toEqual(['bare', 'clamp', 'damped']);
    for (const state of Object.values(first.startStates)) expect(state.every(Number.isFinite)).toBe(true);
    (scenario.transformer as Record<string, unknown>).leakageInductance = '420n';
    const cold = await post(s.base, { scenario });
    const warm = await post(s.base, { scenario, startStates: first.startStates });
    expect([cold.status, warm.status]).toEqual([200, 200]);
    const [coldBody, warmBody] = [await cold.json() as Answer, await warm.json() as Answer];
    for (const v of ['bare', 'clamp', 'damped']) {
      const [a, b] = [coldBody.report.variants[v]!, warmBody.report.variants[v]!];
      expect(b.settled).toBe(true);
      // Both runs end within the settle tolerance (1e-5 of the state scales) of one orbit.
      expect(Math.abs(b.peakDrainVoltage - a.peakDrainVoltage)).toBeLessThan(1e-4 * a.peakDrainVoltage);
      if (a.clampVoltageMean !== undefined) expect(Math.abs(b.clampVoltageMean! - a.clampVoltageMean)).toBeLessThan(1e-4 * a.clampVoltageMean);
    }
    // Another circuit's states (bias-48v's clamp has a larger state) cost time at most.
    const other = await (await post(s.base, { scenario: await demo('bias-48v'), variants: ['clamp'] })).json() as Answer;
    const crossed = await post(s.base, { scenario, variants: ['clamp'], startStates: { clamp: other.startStates.clamp } });
    expect(crossed.status).toBe(200);
    expect((await crossed.json() as Answer).report.variants.clamp!.peakDrainVoltage).toBeCloseTo(coldBody.report.variants.clamp!.peakDrainVoltage, 6);
  }, 60_000);

  it('POST /api/simulate: an edit sent with the last answer\'s startStates also starts from the Jacobian estimates the server kept for them (fewer cycles than a server without them, the same answer); the answer carries only the states', async () => {
    type Answer = { report: { variants: Record<string, { peakDrainVoltage: number; cycles: number; settled: boolean }> }; startStates: Record<string, number[]> };
    const scenario = await demo('gate-drive-24v');
    const first = await (await post(s.base, { scenario })).json() as Answer & Record<string, unknown>;
    expect(Object.keys(first)).not.toContain('jacobians');
    (scenario.transformer as Record<string, unknown>).leakageInductance = '420n';
    const kept = await (await post(s.base, { scenario, startStates: first.startStates })).json() as Answer;
    const fresh = await start();
    try {
      const plain = await (await post(fresh.base, { scenario, startStates: first.startStates })).json() as Answer;
      const cycles = (a: Answer): number => Object.values(a.report.variants).reduce((sum, v) => sum + v.cycles, 0);
      expect(cycles(kept)).toBeLessThan(cycles(plain));
      for (const [v, a] of Object.entries(plain.report.variants)) {
        const b = kept.report.variants[v]!;
        expect(b.settled).toBe(true);
        // Both within the settle tolerance (1e-5 of the state scales) of one orbit.
        expect(Math.abs(b.peakDrainVoltage - a.peakDrainVoltage), v).toBeLessThan(1e-4 * a.peakDrainVoltage);
      }
    } finally {
      await stop(fresh);
    }
  }, 60_000);

  it('POST /api/simulate answers 400 naming each bad field, as the CLI does', async () => {
    const scenario = await demo('bias-48v');
    (scenario.transformer as Record<string, unknown>).leakageInductance = '-1u';
    (scenario.switch as Record<string, unknown>).frequncy = 1e5;
    const res = await post(s.base, { scenario, variants: ['sideways'] });
    expect(res.status).toBe(400);
    const body = await res.json() as { issues: Array<{ path: string; message: string }> };
    const paths = body.issues.map((i) => i.path);
    expect(paths).toEqual(expect.arrayContaining(['transformer.leakageInductance', 'switch.frequncy', 'body.variants']));
    expect(body.issues.find((i) => i.path === 'transformer.leakageInductance')!.message).toMatch(/expected .*greater than 0, found "-1u"/);
  });

  it('POST /api/simulate answers 400 for a body that is not JSON, and 413 for an oversized one', async () => {
    const bad = await fetch(`${s.base}/api/simulate`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"scenario": ' });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { error: string }).error).toMatch(/not valid JSON/);
    const big = await post(s.base, { scenario: await demo('bias-48v'), padding: 'x'.repeat(400 * 1024) });
    expect(big.status).toBe(413);
    expect(((await big.json()) as { error: string }).error).toMatch(/too large/);
  });

  it('a long recording still answers well under 2 MB (traces are reduced per pixel column)', async () => {
    const scenario = await demo('bias-48v');
    scenario.simulation = { recordedCycles: 20, samplesPerCycle: 20000 };
    const res = await post(s.base, { scenario });
    expect(res.status).toBe(200);
    const text = await res.text();
    expect(text.length).toBeLessThan(2 * 1024 * 1024);
    const body = JSON.parse(text) as { traces: { bare: { drainVoltage: { values: number[] } } } };
    expect(body.traces.bare.drainVoltage.values.length).toBeLessThanOrEqual(2 * 1500);
  }, 60_000);

  it('serves only its own static files: no path traversal, no dotfiles', async () => {
    for (const path of ['/../package.json', '/%2e%2e/package.json', '/..%2fpackage.json', '/%2e%2e%2fsrc%2fserver%2fapp.ts']) {
      const res = await fetch(`${s.base}${path}`);
      expect(res.status, path).toBeGreaterThanOrEqual(400);
      expect(await res.text(), path).not.toMatch(/"dependencies"|createServer/);
    }
    expect((await fetch(`${s.base}/vendor/plotly.min.js`)).status).toBe(200);
  });
});

describe('HTTP API: design and sweep', () => {
  let s: Started;
  beforeAll(async () => { s = await start(); });
  afterAll(async () => { await stop(s); });
  const postTo = (route: string, body: unknown): Promise<Response> =>
    fetch(`${s.base}${route}`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });

  it('POST /api/design gives the same parts and verdict as `flyclamp design --json`, plus worst-case traces', async () => {
    const res = await postTo('/api/design', { scenario: await demo('gate-drive-24v') });
    expect(res.status).toBe(200);
    const body = await res.json() as { design: { clamp: unknown; damper: unknown; pass: boolean }; worstCaseTraces: Record<string, { values: number[] }> };
    const cli = JSON.parse((await run(process.execPath, ['dist/cli/main.js', 'design', 'scenarios/gate-drive-24v.json', '--json'])).stdout) as { clamp: unknown; damper: unknown; pass: boolean };
    expect(body.design.clamp).toEqual(cli.clamp);
    expect(body.design.damper).toEqual(cli.damper);
    expect(body.design.pass).toBe(cli.pass);
    expect(Object.keys(body.worstCaseTraces)).toEqual(['bare', 'clamp', 'damped']);
  }, 60_000);

  it('POST /api/sweep runs a leakage sweep: points in order, worst per variant; bad syntax is 400 naming body.vary', async () => {
    const res = await postTo('/api/sweep', { scenario: await demo('bias-48v'), vary: ['transformer.leakageInductance=-10%..+10%:3'] });
    expect(res.status).toBe(200);
    const body = await res.json() as { points: Array<{ index: number; variants: { bare: { peakDrainVoltage: number } } }>; worst: { clamp: { index: number } } };
    expect(body.points.map((p) => p.index)).toEqual([0, 1, 2]);
    // The clamped peak rises with the leakage (the bare one is held at the demo's avalanche voltage).
    expect(body.worst.clamp.index).toBe(2);
    const bad = await postTo('/api/sweep', { scenario: await demo('bias-48v'), vary: ['transformer.leakageInductance=1u'] });
    expect(bad.status).toBe(400);
    const issues = ((await bad.json()) as { issues: Array<{ path: string; message: string }> }).issues;
    expect(issues[0]!.path).toBe('body.vary');
    expect(issues[0]!.message).toMatch(/expected PATH=FROM\.\.TO/);
  }, 60_000);
});

describe('HTTP API limits', () => {
  it('a run over its time cap answers 504 with a clear message', async () => {
    // Within the cost estimate (0.33 s: the default solver tolerance, 30 cycles), but at the
    // tightest tolerances it runs about 300 cycles, some 3 s, until the cap stops it.
    const s = await start({ runTimeCapMs: 1200 });
    try {
      const scenario = await demo('mains-aux-12v');
      scenario.simulation = { settleTolerance: 1e-12, relativeTolerance: 1e-12, maxCycles: 100_000 };
      const res = await post(s.base, { scenario, variants: ['bare'] });
      expect(res.status).toBe(504);
      expect(((await res.json()) as { error: string }).error).toMatch(/time cap/);
    } finally { await stop(s); }
  }, 60_000);

  it('more concurrent requests than runs plus queue get 503 busy, and the rest succeed', async () => {
    const s = await start({ maxConcurrentRuns: 1, maxQueuedRuns: 1 });
    try {
      const scenario = await demo('bias-48v');
      const statuses = (await Promise.all([0, 1, 2, 3].map(() => post(s.base, { scenario, variants: ['clamp'] })))).map((r) => r.status);
      expect(statuses.filter((x) => x === 200).length).toBeGreaterThanOrEqual(1);
      expect(statuses.filter((x) => x === 503).length).toBeGreaterThanOrEqual(1);
      expect(statuses.every((x) => x === 200 || x === 503)).toBe(true);
    } finally { await stop(s); }
  }, 60_000);
});
