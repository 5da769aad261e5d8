// Benchmark of `flyclamp design` on every bundled scenario (issue 10: a full design with corners
// ≤ 10 s on two cores, the search using the pool). Two measurements, medians of a few runs:
// - the compiled CLI in a fresh process, as users run it (it picks worker processes, or one
//   process for a small design), against the target;
// - the design in a fresh process with its simulations one after another against the same with
//   one worker process per core, both from cold as the CLI starts (a warm process would favour
//   the one-process side: the first runs in a process are several times slower), interleaved so
//   that the machine's noise falls on both: the speed-up of the parallel search and corners.
// `npm run bench` runs it; alone: `npm run build && npx tsx test/bench/design.ts`.

import { readdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';

const TARGET_DESIGN_SECONDS = 10;
const REPEATS = Number(process.env.FLYCLAMP_DESIGN_BENCH_REPEATS ?? 3);

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1]!;
const cli = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
const once = fileURLToPath(new URL('./design-once.ts', import.meta.url));

/** One design in a fresh process (the compiled design, so that its workers load compiled code as the CLI's do). */
function freshDesignSeconds(file: string, workers: number): number {
  const child = spawnSync(process.execPath, ['--import', 'tsx', once, file, String(workers)], { encoding: 'utf8' });
  if (child.status !== 0) throw new Error(`${file}: ${child.stderr}`);
  return (JSON.parse(child.stdout) as { seconds: number }).seconds;
}

function cliSeconds(file: string): { seconds: number; workers: number; summary: string } {
  const t0 = performance.now();
  const child = spawnSync(process.execPath, [cli, 'design', file, '--json'], { encoding: 'utf8', maxBuffer: 256 << 20 });
  const seconds = (performance.now() - t0) / 1000;
  if (child.status !== 0 && child.status !== 1) throw new Error(`${file}: design exited ${child.status}: ${child.stderr}`);
  const d = JSON.parse(child.stdout) as {
    pass: boolean; damperFitted: boolean; clamp: { resistance: number; capacitance: number }; limitingCorner: string;
    corners: Array<{ name: string; peakDrainVoltage: number }>; hand: { deratedLimit: number }; allowance: number;
    losses: { share: number; pass: boolean }; candidates: unknown[]; search: { clampSets: number; simulations: number; workers: number };
  };
  const limit = d.hand.deratedLimit - d.allowance;
  const margin = Math.min(...d.corners.map((c) => limit - c.peakDrainVoltage));
  const summary = `${d.pass ? 'PASS' : 'FAIL'}: clamp ${d.clamp.resistance} Ω ∥ ${(d.clamp.capacitance * 1e9).toPrecision(3)} nF, ${d.damperFitted ? 'with a damper' : 'no damper'}; `
    + `least margin ${margin.toFixed(2)} V ("${d.limitingCorner}"), loss ${(100 * d.losses.share).toFixed(1)} % of the output (${d.losses.pass ? 'within' : 'over'} the budget); `
    + `${d.search.clampSets} clamp sets, ${d.candidates.length} candidates, ${d.search.simulations} simulations`;
  return { seconds, workers: d.search.workers, summary };
}

export async function designBench(): Promise<boolean> {
  const files = readdirSync('scenarios').filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json')).sort().map((f) => `scenarios/${f}`);
  const workers = availableParallelism();
  console.log(`\nflyclamp design, every bundled scenario, medians of ${REPEATS}: the CLI in a fresh process (target ≤ ${TARGET_DESIGN_SECONDS} s), and the design's simulations one after another in one process against ${workers} worker processes`);
  let allMet = true;
  for (const file of files) {
    const cliRuns: number[] = [];
    let summary = '', cliWorkers = 0;
    for (let i = 0; i < REPEATS; i++) ({ seconds: cliRuns[i]!, summary, workers: cliWorkers } = cliSeconds(file));
    const alone: number[] = [], pooled: number[] = [];
    for (let i = 0; i < REPEATS; i++) {
      alone.push(freshDesignSeconds(file, 0));
      pooled.push(freshDesignSeconds(file, workers));
    }
    const met = median(cliRuns) <= TARGET_DESIGN_SECONDS;
    allMet &&= met;
    console.log(`  ${file}: CLI ${median(cliRuns).toFixed(2)} s (${cliWorkers ? `${cliWorkers} worker processes` : 'one process'}; ${met ? 'met' : 'MISSED'}); fresh process, simulations one after another ${median(alone).toFixed(2)} s; ${workers} worker processes ${median(pooled).toFixed(2)} s: speed-up ${(median(alone) / median(pooled)).toFixed(2)}×`);
    console.log(`    ${summary}`);
  }
  return allMet;
}

if (process.argv[1] === fileURLToPath(import.meta.url)) await designBench();
