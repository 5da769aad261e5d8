// One design in a fresh process, its simulations one after another here (workers 0) or on worker
// processes, both from cold as the CLI starts: prints the design's wall time in seconds as JSON.
// Used by test/bench/design.ts.

import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
const compiledDesign = '../../dist/design/design-clamp.js';
const { designClamp } = (await import(compiledDesign)) as typeof import('../../src/design/design-clamp.js');

const [file, workers] = process.argv.slice(2);
const loaded = await loadScenarioFile(file!);
if (!loaded.ok) throw new Error(`${file}: invalid`);
const t0 = performance.now();
const d = await designClamp(loaded.scenario, { workers: Number(workers) });
process.stdout.write(JSON.stringify({ seconds: (performance.now() - t0) / 1000, simulations: d.search.simulations }));
