import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { CAPTURE_BODY_LIMIT_BYTES, createServer, MAX_HTTP_CAPTURE_SAMPLES, type FlyclampServer } from '../../src/server/app.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import type { Scenario } from '../../src/circuit/scenario.js';
import { captureCsv, scenarioFrom, syntheticCapture, type Degradation } from '../capture/synthetic-capture.js';

// POST /api/capture and /api/fit on synthetic captures made by the simulator (the board of
// test/capture/fit-synthetic.test.ts: a 30 V bias flyback with L = 400 nH, Coss = 330 pF,
// R = 1.5 Ω), degraded as an 8-bit scope would. Acceptance as in issue 13: L and C within 2 %.

interface Started { base: string; server: FlyclampServer; listener: Server }

async function start(): Promise<Started> {
  const server = createServer({ scenariosDir: 'scenarios', webDir: 'web', readmeFile: 'README.md' });
  const listener = server.app.listen(0, '127.0.0.1');
  await new Promise<void>((ok) => listener.once('listening', () => ok()));
  return { base: `http://127.0.0.1:${(listener.address() as AddressInfo).port}`, server, listener };
}
async function stop(s: Started): Promise<void> {
  const closed = new Promise<void>((ok) => s.listener.close(() => ok()));
  s.listener.closeAllConnections();
  await closed;
  await s.server.close();
}
const postTo = (base: string, route: string, body: unknown): Promise<Response> =>
  fetch(`${base}${route}`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: typeof body === 'string' ? body : JSON.stringify(body) });

const L_HENRIES = 400e-9, COSS_FARADS = 330e-12;
const board = (leakage: string | number, coss: string | number, resistanceOhms: number): Scenario => scenarioFrom({
  name: 'synthetic 30 V bias flyback',
  supply: { voltage: 30 },
  transformer: { magnetizingInductance: '20u', leakageInductance: leakage, turnsRatio: 1, primaryResistance: resistanceOhms, windingCapacitance: 20e-12 },
  output: { voltage: 15, diodeDrop: 0.4 },
  switch: { frequency: '250k', peakCurrent: 0.9, drainCapacitance: coss, onResistance: '30m', voltageRating: 100 },
});
const scope: Degradation = {
  sampleIntervalSeconds: 2.473e-9, spanSeconds: 10e-6, preTriggerFraction: 0.3, noiseVolts: 0.2, offsetVolts: 0.7,
  bits: 8, fullScaleMin: -10, fullScaleMax: 90, seed: 3,
};
type Issues = { error: string; issues?: Array<{ path: string; message: string }> };

/** The instant nearest t = 0 where a reduced trace rises through `level` (linear between its points), s. */
function risingCrossingNearZero(trace: { timeSeconds: number[]; values: number[] }, level: number): number {
  const { timeSeconds: t, values: v } = trace;
  let best = NaN;
  for (let k = 1; k < v.length; k++) {
    if (!(v[k - 1]! < level && v[k]! >= level)) continue;
    const at = t[k - 1]! + ((level - v[k - 1]!) / (v[k]! - v[k - 1]!)) * (t[k]! - t[k - 1]!);
    if (!(Math.abs(at) >= Math.abs(best))) best = at;
  }
  return best;
}

describe('POST /api/capture and /api/fit', () => {
  let s: Started;
  let csv: string;
  beforeAll(async () => {
    s = await start();
    csv = captureCsv(syntheticCapture(board(L_HENRIES, COSS_FARADS, 1.5), 'bare', scope), 'comma');
  });
  afterAll(async () => { await stop(s); });

  it('/api/fit answers the `fit --json` shape, L and C within 2 % of the truth, with the capture and the fitted drain aligned at t = 0', async () => {
    const poorGuess = scenarioToJson(board('300n', '495p', 0.5));
    const res = await postTo(s.base, '/api/fit', { scenario: poorGuess, capture: csv, column: 'CH1' });
    const body = await res.json() as Record<string, unknown> & {
      fitted: Record<string, number>; uncertainty: Record<string, number>; residual: number; captureSamples: number; ringFrequency: number;
      capture: { timeSeconds: number[]; values: number[] }; simulatedDrain: { timeSeconds: number[]; values: number[] }; midpointVolts: number;
    };
    expect(res.status, JSON.stringify(body).slice(0, 400)).toBe(200);
    for (const key of ['fitted', 'uncertainty', 'ringFrequency', 'ringDecay', 'residual', 'captureSamples']) expect(body).toHaveProperty(key);
    expect(Object.keys(body.fitted).sort()).toEqual(['switch.drainCapacitance', 'transformer.leakageInductance', 'transformer.primaryResistance']);
    expect(Object.keys(body.uncertainty).sort()).toEqual(Object.keys(body.fitted).sort());
    expect(Math.abs(body.fitted['transformer.leakageInductance']! / L_HENRIES - 1)).toBeLessThan(0.02);
    expect(Math.abs(body.fitted['switch.drainCapacitance']! / COSS_FARADS - 1)).toBeLessThan(0.02);
    expect(body.captureSamples).toBe(Math.floor(10e-6 / 2.473e-9));
    // Display reduction: at most two points per column (3000 columns).
    expect(body.capture.values.length).toBeLessThanOrEqual(6000);
    // t = 0 is the first turn-off edge: the capture rises through its midpoint there, within a
    // sample interval; the fitted simulation (offset added) within a twentieth of a ring period.
    const ringPeriodSeconds = 1 / body.ringFrequency;
    expect(Math.abs(risingCrossingNearZero(body.capture, body.midpointVolts))).toBeLessThan(2 * 2.473e-9);
    expect(Math.abs(risingCrossingNearZero(body.simulatedDrain, body.midpointVolts))).toBeLessThan(ringPeriodSeconds / 20);
  }, 120_000);

  it('/api/capture reads and measures without a scenario; the ring frequency matches the fit\'s', async () => {
    const res = await postTo(s.base, '/api/capture', { capture: csv, column: 2 });
    const body = await res.json() as { ok: boolean; columnName: string; voltageColumns: string[]; ring: { frequency: number }; capture: { values: number[] } };
    expect(res.status).toBe(200);
    expect(body.columnName).toBe('CH1');
    expect(body.voltageColumns).toEqual(['CH1', 'CH2']);
    // The closed-form ring of the board: √(1/(L·C) − (R/2L)²)/2π with C = Coss + Cw (any circuits text).
    const closedFormHz = Math.sqrt(1 / (L_HENRIES * 350e-12) - (1.5 / (2 * L_HENRIES)) ** 2) / (2 * Math.PI);
    expect(Math.abs(body.ring.frequency / closedFormHz - 1)).toBeLessThan(0.005);
  });

  it('a malformed capture is a 400 naming body.capture with the line, what was expected and what was found', async () => {
    const res = await postTo(s.base, '/api/capture', { capture: 'Time,CH1\n0,1\n1e-9,2\n2e-9,oops\n' });
    const body = await res.json() as Issues;
    expect(res.status).toBe(400);
    expect(body.issues).toEqual([{ path: 'body.capture', pathKeys: ['body', 'capture'], message: 'line 4: expected a number in column "CH1", found "oops"' }]);
    const backwards = await postTo(s.base, '/api/fit', { scenario: scenarioToJson(board('300n', '495p', 0.5)), capture: 'Time,CH1\n0,1\n2e-9,2\n1e-9,3\n' });
    expect(backwards.status).toBe(400);
    expect(((await backwards.json()) as Issues).issues?.[0]?.message).toMatch(/^line 4 \(data row 3\): time does not increase .*expected strictly increasing time$/);
  });

  it('an unknown or missing column is a 400 naming body.column with the choices; a capture that is not text names body.capture', async () => {
    const unknown = await postTo(s.base, '/api/capture', { capture: csv, column: 'CH9' });
    expect(unknown.status).toBe(400);
    const issue = ((await unknown.json()) as Issues).issues?.[0];
    expect(issue?.path).toBe('body.column');
    expect(issue?.message).toBe('expected one of CH1, CH2 (or a column number 2–3), found "CH9"');
    const missing = await postTo(s.base, '/api/capture', { capture: csv });
    expect(((await missing.json()) as Issues).issues?.[0]).toMatchObject({ path: 'body.column', pathKeys: ['body', 'column'], message: expect.stringContaining('name the drain with "column"') });
    const notText = await postTo(s.base, '/api/capture', { capture: [1, 2, 3] });
    expect(notText.status).toBe(400);
    expect(((await notText.json()) as Issues).issues?.[0]?.path).toBe('body.capture');
    const badColumn = await postTo(s.base, '/api/capture', { capture: csv, column: { name: 'CH1' } });
    expect(((await badColumn.json()) as Issues).issues?.[0]?.path).toBe('body.column');
  });

  it('a capture with no turn-off in it is a 422 that says so', async () => {
    const flat = ['Time,CH1', ...Array.from({ length: 200 }, (_, k) => `${k * 1e-9},5.00`)].join('\n');
    const res = await postTo(s.base, '/api/fit', { scenario: scenarioToJson(board('300n', '495p', 0.5)), capture: flat });
    const body = await res.json() as Issues;
    expect(res.status).toBe(422);
    expect(body.error).toMatch(/^no ring can be measured in the capture: no turn-off edge/);
    expect(JSON.stringify(body)).not.toMatch(/\bat .*\.(ts|js):\d+/); // no stack trace
  });

  it('a fit whose settled simulations would not fit in its cap is a 422 naming the value that makes them expensive', async () => {
    // A 10 kHz switch against a ring of about 20 MHz: about 6 s estimated per simulation (README
    // "Budgets": 30 cycles × fast periods × 0.2 ms), under a single run's 20 s but 40 of them over 120 s.
    const slow = scenarioToJson(board('300n', '495p', 0.5));
    (slow.switch as Record<string, unknown>).frequency = '10k';
    const res = await postTo(s.base, '/api/fit', { scenario: slow, capture: csv, column: 'CH1' });
    const body = await res.json() as Issues;
    expect(res.status).toBe(422);
    expect(body.issues?.[0]?.path).toBe('switch.frequency');
    expect(body.issues?.[0]?.message).toMatch(/^expected a scenario that runs within 3 s, .*up to 40 of them within 120 s/);
  });

  it(`the capture routes take bodies up to ${CAPTURE_BODY_LIMIT_BYTES / 1024 / 1024} MB and ${MAX_HTTP_CAPTURE_SAMPLES} samples; the other routes keep 256 kB`, async () => {
    const padded = `${'Comment,padding\n'.repeat(20_000)}${csv}`; // about 620 kB: over 256 kB, under the capture limit
    expect(Buffer.byteLength(padded)).toBeGreaterThan(256 * 1024);
    expect((await postTo(s.base, '/api/capture', { capture: padded, column: 'CH1' })).status).toBe(200);
    expect((await postTo(s.base, '/api/simulate', { scenario: { name: 'x'.repeat(300 * 1024) } })).status).toBe(413);
    const tooBig = JSON.stringify({ capture: 'x'.repeat(CAPTURE_BODY_LIMIT_BYTES + 1) });
    expect((await postTo(s.base, '/api/capture', tooBig)).status).toBe(413);
    const tooManyLines = await postTo(s.base, '/api/capture', { capture: '1\n'.repeat(MAX_HTTP_CAPTURE_SAMPLES + 20_000) });
    expect(tooManyLines.status).toBe(413);
    expect(((await tooManyLines.json()) as Issues).issues?.[0]?.path).toBe('body.capture');
  });
});
