import { describe, expect, it } from 'vitest';
import { reduceForDisplay, repeatCycle, roundForDisplay } from '../../src/analysis/display-reduction.js';

// A damped 10 MHz ring sampled at 10 GS/s over 5 µs: 50,000 samples for a 1000-column plot.
const time = Array.from({ length: 50_000 }, (_, i) => i * 1e-10);
const values = time.map((t) => 60 + 120 * Math.exp(-t / 1e-6) * Math.sin(2 * Math.PI * 1e7 * t));

describe('reduceForDisplay(time, values, start, end, columns)', () => {
  it('keeps each column\'s smallest and largest sample, in time order (checked by brute force per column)', () => {
    const columns = 1000, width = 5e-6 / columns;
    const reduced = reduceForDisplay(time, values, 0, 5e-6, columns);
    expect(reduced.values).toHaveLength(2 * columns);
    for (let c = 0; c < columns; c += 97) {
      const inColumn = values.filter((_, i) => time[i]! >= c * width && (c === columns - 1 || time[i]! < (c + 1) * width));
      const pair = reduced.values.slice(2 * c, 2 * c + 2);
      expect(Math.min(...pair)).toBe(Math.min(...inColumn));
      expect(Math.max(...pair)).toBe(Math.max(...inColumn));
      expect(reduced.timeSeconds[2 * c]!).toBeLessThanOrEqual(reduced.timeSeconds[2 * c + 1]!);
    }
  });
});

describe('roundForDisplay(trace, windowSeconds, columns)', () => {
  it('moves no value by more than 1e-5 of the trace\'s range nor a time by more than 1 % of a column, and shortens the JSON by a quarter at least', () => {
    const columns = 1000;
    const reduced = reduceForDisplay(time, values, 0, 5e-6, columns);
    const rounded = roundForDisplay(reduced, 5e-6, columns);
    const range = Math.max(...reduced.values) - Math.min(...reduced.values);
    reduced.values.forEach((v, i) => expect(Math.abs(rounded.values[i]! - v)).toBeLessThanOrEqual(0.5e-5 * range));
    reduced.timeSeconds.forEach((t, i) => expect(Math.abs(rounded.timeSeconds[i]! - t)).toBeLessThanOrEqual(0.01 * 5e-6 / columns));
    expect(JSON.stringify(rounded).length).toBeLessThan(0.75 * JSON.stringify(reduced).length);
  });

  it('sends each value as the double its short decimal text reads as (a step of 1e-3 V here: 3 decimals at most)', () => {
    const columns = 1000;
    const rounded = roundForDisplay(reduceForDisplay(time, values, 0, 5e-6, columns), 5e-6, columns);
    // The range is about 240 V, so the step is 1e-3 V (1e-5 of the range at most, a power of ten).
    for (const v of rounded.values) {
      expect(v).toBe(Number(v.toFixed(3)));
      expect(String(v).split('.')[1]?.length ?? 0).toBeLessThanOrEqual(3);
    }
    // Times: a step of 1e-11 s (1 % of a 5 ns column), 11 decimals in seconds.
    for (const t of rounded.timeSeconds) expect(t).toBe(Number(t.toFixed(11)));
  });
});

describe('repeatCycle(time, values, periodSeconds, copies)', () => {
  it('draws one settled cycle as the cycles recording them all gives, within the settle tolerance (gate-drive-24v, clamp)', async () => {
    const { loadScenarioFile } = await import('../../src/circuit/load-scenario.js');
    const { runVariant } = await import('../../src/simulation/run-variant.js');
    const loaded = await loadScenarioFile('scenarios/gate-drive-24v.json');
    if (!loaded.ok) throw new Error('demo invalid');
    const scenario = loaded.scenario;
    const all = runVariant(scenario, 'clamp');
    const one = runVariant(scenario, 'clamp', { recordedCyclesWhenSettled: 1 });
    expect(all.recordedCycles).toBe(3);
    expect(one.recordedCycles).toBe(1);
    const period = 1 / scenario.switch.frequency;
    const drawn = repeatCycle(one.recorder.waveform.timeSeconds, one.recorder.waveform.channels.drainVoltage, period, 3);
    const recorded = all.recorder.waveform;
    expect(drawn.time).toHaveLength(recorded.timeSeconds.length);
    // The same grid, and every sample within the settle tolerance of Vin + VR (the drain's scale)
    // of the recorded one: both runs settle on the same orbit, from different cycle counts.
    const scale = scenario.supply.voltage + scenario.transformer.turnsRatio * (scenario.output.voltage + scenario.output.diodeDrop);
    let worst = 0;
    recorded.timeSeconds.forEach((t, i) => {
      expect(Math.abs(drawn.time[i]! - t)).toBeLessThanOrEqual(1e-9 * period);
      worst = Math.max(worst, Math.abs(drawn.values[i]! - recorded.channels.drainVoltage[i]!));
    });
    expect(worst).toBeLessThanOrEqual(10 * scenario.simulation.settleTolerance * scale);
    // …and it is a repeat: a sample one period later is the same value.
    const perCycle = drawn.time.length / 3 | 0;
    expect(drawn.values[perCycle + 7]).toBe(drawn.values[7]);
  });
});
