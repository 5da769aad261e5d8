// The package as it would be installed: `npm pack` holds the built library, the page, the bundled
// scenarios with their JSON Schema, README and LICENSE, and nothing of the tests or the worktree;
// `import … from 'flyclamp'` resolves to the built entry, with types a strict script compiles against.

import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../../', import.meta.url));
const scratch = join(root, 'test-artifacts', 'library-entry');
const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';

beforeAll(async () => {
  if (!existsSync(join(root, 'dist', 'index.js'))) throw new Error('dist/index.js is missing: run "npm run build" first (npm test does it)');
  await mkdir(scratch, { recursive: true });
});
afterAll(async () => { await rm(scratch, { recursive: true, force: true }); });

describe('npm pack', () => {
  it('holds dist with the entry and its types, README, LICENSE and the schema; no tests, sources or worktree files', () => {
    const packed = JSON.parse(execFileSync(npm, ['pack', '--dry-run', '--json', '--ignore-scripts'], { cwd: root, encoding: 'utf8' })) as Array<{ files: Array<{ path: string }> }>;
    const files = packed[0]!.files.map((f) => f.path);
    for (const wanted of ['package.json', 'README.md', 'LICENSE', 'dist/index.js', 'dist/index.d.ts', 'dist/cli/main.js', 'scenarios/scenario.schema.json', 'scenarios/bias-48v.json']) {
      expect(files, wanted).toContain(wanted);
    }
    const unwanted = files.filter((f) => /^(test|src|node_modules|test-artifacts|\.git|\.ci)\//.test(f) || /\.(tmp|test\.[jt]s)$/.test(f) || f.includes('/.'));
    expect(unwanted).toEqual([]);
    expect(files.every((f) => /^(dist|web|scenarios)\//.test(f) || ['package.json', 'README.md', 'LICENSE'].includes(f)), files.join('\n')).toBe(true);
  });
});

describe("import from 'flyclamp'", () => {
  it('gives loadScenario, simulate, design and sweep; simulate reports what `flyclamp simulate --json` reports', () => {
    const script = [
      "import { loadScenario, simulate, design, sweep, ScenarioInvalid } from 'flyclamp';",
      "const scenario = await loadScenario('scenarios/gate-drive-24v.json');",
      "const { report } = simulate(scenario, { variants: ['bare'] });",
      "let invalid = '';",
      "try { await loadScenario('package.json'); } catch (e) { invalid = e instanceof ScenarioInvalid ? e.issues[0].path : 'other'; }",
      "console.log(JSON.stringify({ kinds: [typeof design, typeof sweep], peak: report.variants.bare.peakDrainVoltage, invalid }));",
    ].join('\n');
    const run = spawnSync(process.execPath, ['--input-type=module', '-e', script], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    expect(run.stderr).toBe('');
    const out = JSON.parse(run.stdout) as { kinds: string[]; peak: number; invalid: string };
    expect(out.kinds).toEqual(['function', 'function']);
    // package.json has none of a scenario's fields: the first issue is an unknown one of them.
    expect(out.invalid).not.toBe('other');
    expect(out.invalid).not.toBe('');
    const cli = JSON.parse(execFileSync(process.execPath, ['dist/cli/main.js', 'simulate', 'scenarios/gate-drive-24v.json', '--json', '--variant', 'bare'], { cwd: root, encoding: 'utf8' })) as { variants: { bare: { peakDrainVoltage: number } } };
    // The same settled orbit: the library records the scenario's three cycles (its caller gets the
    // waveforms), the CLI without --csv one, so the peaks agree within the settle tolerance (1e-5).
    expect(Math.abs(out.peak - cli.variants.bare.peakDrainVoltage)).toBeLessThanOrEqual(1e-5 * cli.variants.bare.peakDrainVoltage);
    expect(out.peak).toBeGreaterThan(50);
  });

  it('has types a strict script and the README example compile against, and that refuse a misuse', async () => {
    const good = join(scratch, 'use.ts');
    const bad = join(scratch, 'misuse.ts');
    await writeFile(good, [
      "import { loadScenario, simulate, design, sweep, type Scenario, type SimulateResult, type SweepResult } from 'flyclamp';",
      "const scenario: Scenario = await loadScenario('scenarios/bias-48v.json');",
      "const result: SimulateResult = simulate(scenario, { variants: ['bare', 'clamp'], maxSeconds: 30 });",
      "const peak: number | undefined = result.report.variants.clamp?.peakDrainVoltage;",
      "const study: Promise<SweepResult> = sweep(scenario, { vary: ['clamp.resistance=10k..22k:3'], workers: 0 });",
      'void design; void peak; void study;',
    ].join('\n'), 'utf8');
    // The README's example, as a user would paste it.
    const readme = await readFile(join(root, 'README.md'), 'utf8');
    const example = /## Library\n[\s\S]*?```ts\n([\s\S]*?)```/.exec(readme)?.[1];
    expect(example).toBeDefined();
    const fromReadme = join(scratch, 'readme-example.ts');
    await writeFile(fromReadme, example ?? '', 'utf8');
    await writeFile(bad, "import { simulate, type Scenario } from 'flyclamp';\ndeclare const s: Scenario;\nsimulate(s, { variants: ['snubbed'] });\n", 'utf8');
    const tsc = (file: string) => spawnSync(process.execPath, [join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '--ignoreConfig', '--noEmit', '--strict', '--module', 'nodenext', '--moduleResolution', 'nodenext', '--target', 'es2022', '--types', 'node', file], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    const ok = tsc(good);
    expect(ok.stdout + ok.stderr).toBe('');
    expect(ok.status).toBe(0);
    const readmeRun = tsc(fromReadme);
    expect(readmeRun.stdout + readmeRun.stderr).toBe('');
    const refused = tsc(bad);
    expect(refused.status).not.toBe(0);
    expect(refused.stdout).toMatch(/snubbed/);
  });
});
