// One 2,000-cycle run for the memory target; prints a JSON line for run.ts.
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { runVariant } from '../../src/simulation/run-variant.js';

const loaded = await loadScenarioFile('scenarios/bias-48v.json');
if (!loaded.ok) throw new Error('bias-48v.json invalid');
const scenario = loaded.scenario;
const t0 = performance.now();
const run = runVariant(scenario, 'clamp', { exactCycles: 2000, extrapolate: false });
process.stdout.write(`${JSON.stringify({ cycles: run.cycles, maxRssMb: process.resourceUsage().maxRSS / 1024, seconds: (performance.now() - t0) / 1000 })}\n`);
