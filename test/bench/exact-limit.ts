// Issue targets against the exact limit, on constant-part scenarios (each bundled demo with ideal,
// constant parts, `withIdealParts`, written to a file):
//  - whole-process CPU of `flyclamp simulate` (three variants) ≤ 2× the exact solver's own process;
//  - in-process time per settled variant, both warm, ≤ 5× the exact solver's;
//  - every metric within 1e-4 of the exact solver's (relative to the metric's scale).
// The exact solver (test/bench/exact/) has its own stepping and Newton shooting and shares only the
// scenario loader. For the whole-process runs it is bundled into one file with esbuild and loads the
// compiled loader from dist, as the compiled CLI does: neither side pays for transpiling.

import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { availableVariants, type Scenario } from '../../src/circuit/scenario.js';
import { withIdealParts } from '../../src/model/ideal-parts.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { exactRun, type ExactMetrics, type ExactRun } from './exact/exact-solver.js';

const PROCESS_REPEATS = 5;
const WARM_REPEATS = 7;
const TARGET_PROCESS_RATIO = 2;
const TARGET_WARM_RATIO = 5;
const TARGET_METRIC_ERROR = 1e-4;

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1]!;
const pad = (s: string | number, n: number): string => String(s).padStart(n);

/** User + system CPU seconds of one child process, from bash's `times` (Node reports no child rusage). */
function processCpuSeconds(command: string[], outFile: string): { seconds: number; stdout: string } {
  const quoted = command.map((a) => `'${a.replace(/'/g, `'\\''`)}'`).join(' ');
  const child = spawnSync('bash', ['-c', `${quoted} > "$FLYCLAMP_BENCH_OUT"; status=$?; times; exit $status`], {
    encoding: 'utf8', env: { ...process.env, FLYCLAMP_BENCH_OUT: outFile },
  });
  if (child.status !== 0) throw new Error(`${command.join(' ')} failed: ${child.stderr}`);
  // `times` prints the shell's own line, then its children's: "0m0.512s 0m0.040s".
  const children = child.stdout.trim().split('\n').pop()!;
  const seconds = [...children.matchAll(/(\d+)m([\d.]+)s/g)].reduce((s, m) => s + Number(m[1]) * 60 + Number(m[2]), 0);
  return { seconds, stdout: readFileSync(outFile, 'utf8') };
}

type MetricName = keyof ExactMetrics;

/** The scale a metric's error is taken against: its own size, or the circuit's where it is small. */
function metricScale(name: MetricName, exact: ExactMetrics, scenario: Scenario): number {
  const volts = scenario.supply.voltage + scenario.transformer.turnsRatio * (scenario.output.voltage + scenario.output.diodeDrop);
  if (name === 'peakDrainVoltage' || name === 'clampVoltageMean' || name === 'clampVoltageRipple') return Math.max(Math.abs(exact[name] ?? 0), name === 'clampVoltageRipple' ? 0 : volts);
  if (name.endsWith('Power')) return Math.max(Math.abs(exact[name] ?? 0), 1e-3 * exact.inputPower);
  return Math.max(Math.abs(exact[name] ?? 0), 1e-3 * exact.peakPrimaryCurrent);
}

function worstError(exact: ExactMetrics, flyclamp: Record<string, unknown>, scenario: Scenario): { name: string; error: number } {
  let worst = { name: '', error: 0 };
  for (const name of Object.keys(exact) as MetricName[]) {
    const value = flyclamp[name];
    const reference = exact[name];
    if (reference === undefined) continue;
    const error = typeof value === 'number' ? Math.abs(value - reference) / metricScale(name, exact, scenario) : Number.POSITIVE_INFINITY;
    if (!(error <= worst.error)) worst = { name, error };
  }
  return worst;
}

export async function exactLimitBench(): Promise<boolean> {
  const dir = mkdtempSync(join(tmpdir(), 'flyclamp-exact-'));
  const outFile = join(dir, 'out.json');
  try {
    const bundle = join(dir, 'exact-cli.mjs');
    await build({
      entryPoints: [fileURLToPath(new URL('./exact/exact-cli.ts', import.meta.url))],
      bundle: true, platform: 'node', format: 'esm', outfile: bundle, logLevel: 'warning',
    });
    console.log('\nExact limit (constant, ideal parts: each demo through withIdealParts; the benchmark\'s own exact solver, test/bench/exact/)');
    console.log(`  whole process: CPU seconds (user + system) of \`flyclamp simulate FILE --json\` against the bundled exact solver on the same file, medians of ${PROCESS_REPEATS} alternating runs`);
    console.log(`  warm: in-process ms per settled variant, medians of ${WARM_REPEATS} after a warm-up; error: the worst metric's difference from the exact solver, relative to its scale`);
    console.log(`  ${'scenario'.padEnd(16)}${pad('flyclamp s', 12)}${pad('exact s', 10)}${pad('ratio', 8)}   ${'variant'.padEnd(8)}${pad('flyclamp ms', 13)}${pad('exact ms', 10)}${pad('ratio', 8)}${pad('cycles', 8)}${pad('periods', 9)}${pad('worst error', 13)}  metric`);
    let ok = true;
    const files = readdirSync('scenarios').filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json')).sort();
    for (const file of files) {
      const loaded = await loadScenarioFile(`scenarios/${file}`);
      if (!loaded.ok) throw new Error(`${file}: invalid`);
      const ideal = withIdealParts(loaded.scenario);
      const idealFile = join(dir, file);
      writeFileSync(idealFile, JSON.stringify(scenarioToJson(ideal)));
      const reloaded = await loadScenarioFile(idealFile);
      if (!reloaded.ok) throw new Error(`${file}: its ideal-part form does not load`);
      const scenario = reloaded.scenario;

      const flyclampCpu: number[] = [], exactCpu: number[] = [];
      let report: { variants: Record<string, Record<string, unknown>> } | undefined;
      let exactOut: Record<string, ExactRun> | undefined;
      for (let i = 0; i < PROCESS_REPEATS; i++) {
        const f = processCpuSeconds([process.execPath, 'dist/cli/main.js', 'simulate', idealFile, '--json'], outFile);
        const e = processCpuSeconds([process.execPath, bundle, idealFile], outFile);
        flyclampCpu.push(f.seconds);
        exactCpu.push(e.seconds);
        report ??= JSON.parse(f.stdout) as typeof report;
        exactOut ??= JSON.parse(e.stdout) as Record<string, ExactRun>;
      }
      const processRatio = median(flyclampCpu) / median(exactCpu);
      ok &&= processRatio <= TARGET_PROCESS_RATIO;

      const rows: string[] = [];
      for (const variant of availableVariants(scenario)) {
        const exact = exactOut![variant]!;
        if (!exact.converged) { ok = false; rows.push(`${variant}: the exact solver did not converge`); continue; }
        runVariant(scenario, variant);
        exactRun(scenario, variant);
        const flyclampMs: number[] = [], exactMs: number[] = [];
        let cycles = 0;
        for (let i = 0; i < WARM_REPEATS; i++) {
          let t0 = performance.now();
          cycles = runVariant(scenario, variant).cycles;
          flyclampMs.push(performance.now() - t0);
          t0 = performance.now();
          exactRun(scenario, variant);
          exactMs.push(performance.now() - t0);
        }
        const warmRatio = median(flyclampMs) / median(exactMs);
        const worst = worstError(exact.metrics, report!.variants[variant] ?? {}, scenario);
        ok &&= warmRatio <= TARGET_WARM_RATIO && worst.error <= TARGET_METRIC_ERROR;
        rows.push(`${variant.padEnd(8)}${pad(median(flyclampMs).toFixed(1), 13)}${pad(median(exactMs).toFixed(1), 10)}${pad(warmRatio.toFixed(2), 8)}${pad(cycles, 8)}${pad(exact.periods, 9)}${pad(worst.error.toExponential(1), 13)}  ${worst.name}`);
      }
      const lead = `  ${file.replace(/\.json$/, '').padEnd(16)}${pad(median(flyclampCpu).toFixed(2), 12)}${pad(median(exactCpu).toFixed(2), 10)}${pad(processRatio.toFixed(2), 8)}   `;
      rows.forEach((row, i) => console.log(`${i === 0 ? lead : ' '.repeat(lead.length)}${row}`));
    }
    console.log(`  targets: whole process ≤ ${TARGET_PROCESS_RATIO}×, warm per variant ≤ ${TARGET_WARM_RATIO}×, every metric within ${TARGET_METRIC_ERROR}: ${ok ? 'met' : 'MISSED'}`);
    return ok;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
