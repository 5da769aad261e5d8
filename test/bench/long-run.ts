// One 2,000-cycle run for the memory target; prints a JSON line for run.ts.
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { runVariant } from '../../src/simulation/run-variant.js';

const loaded = await loadScenarioFile('scenarios/bias-48v.json');
if (!loaded.ok) throw new Error('bias-48v.json invalid');
const scenario = loaded.scenario;
// A settle tolerance no run can meet keeps it going to the cap.
scenario.simulation = { ...scenario.simulation, maxCycles: 2000, settleTolerance: 1e-300 };
const t0 = performance.now();
const run = runVariant(scenario, 'clamp');
process.stdout.write(`${JSON.stringify({ cycles: run.cycles, maxRssMb: process.resourceUsage().maxRSS / 1024, seconds: (performance.now() - t0) / 1000 })}\n`);
