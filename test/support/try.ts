import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { simulateScenario } from '../../src/simulation/simulate-scenario.js';
import { variantMetrics } from '../../src/analysis/variant-metrics.js';
const r = await loadScenarioFile(process.argv[2]!);
if (!r.ok) { console.log(r.issues); process.exit(2); }
for (const run of simulateScenario(r.scenario)) {
  const m = variantMetrics(run, r.scenario.switch.voltageRating);
  console.log(run.variant, JSON.stringify(m, (k, v) => typeof v === 'number' ? Number(v.toPrecision(5)) : v));
}
