// The exact solver as a whole process, for the whole-process CPU comparison with `flyclamp
// simulate`: load one scenario with flyclamp's compiled loader (shared, as the issue allows), settle
// every variant, print the metrics as JSON. The benchmark bundles this file (esbuild) and leaves
// the loader to be imported from dist at run time, so neither side pays for transpiling.

import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { exactRun } from './exact-solver.js';
import type { Variant } from './ideal-switching-node.js';

const loaderPath = pathToFileURL(resolve('dist/circuit/load-scenario.js')).href;
const { loadScenarioFile } = (await import(loaderPath)) as typeof import('../../../src/circuit/load-scenario.js');
const loaded = await loadScenarioFile(process.argv[2]!);
if (!loaded.ok) throw new Error(`${process.argv[2]}: not a valid scenario`);
const s = loaded.scenario;
const variants: Variant[] = ['bare', ...(s.clamp ? ['clamp' as const] : []), ...(s.clamp && s.damper ? ['damped' as const] : [])];
const out = Object.fromEntries(variants.map((v) => [v, exactRun(s, v)]));
process.stdout.write(`${JSON.stringify(out)}\n`);
