import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { checkInputLimits } from '../../src/circuit/input-limits.js';
import { nonFinitePaths } from '../../src/analysis/result-checks.js';
import { parseSiNumber } from '../../src/circuit/si-number.js';

// Property-based mutations of the demo scenarios. In `npm test` a few dozen runs keep the suite
// under a minute; `npm run fuzz` sets FLYCLAMP_FUZZ_RUNS for a longer search. A failure prints
// fast-check's seed and the shrunk scenario to replay.

const root = fileURLToPath(new URL('../../', import.meta.url));
const cli = join(root, 'dist', 'cli', 'main.js');
const CLI_RUNS = Number(process.env.FLYCLAMP_FUZZ_RUNS ?? 30);
const VALIDATOR_RUNS = Math.max(300, 10 * CLI_RUNS);
/** Budget handed to each CLI run; a run past it (plus start-up) counts as a hang. */
const RUN_SECONDS = 3;
const HANG_MS = 30_000;
const STACK_FRAME = /\bat (?:async )?(?:[^\s()]+ )?\(?(?:file:\/\/|\/|[A-Za-z]:\\|node:)/;

type Doc = Record<string, any>;
const demos: Doc[] = ['bias-48v', 'mains-aux-12v', 'gate-drive-24v']
  .map((id) => JSON.parse(readFileSync(join(root, 'scenarios', `${id}.json`), 'utf8')) as Doc);

/** Every leaf path of the demos, the optional simulation settings and a few that do not exist. */
const PATHS = [...new Set([
  ...demos.flatMap((d) => leafPaths(d)),
  'simulation.relativeTolerance', 'simulation.settleTolerance', 'simulation.maxCycles', 'simulation.recordedCycles', 'simulation.samplesPerCycle',
  'switch.maxDutyCycle', 'switch.bodyDiodeDrop', 'design.leakageTolerance', 'design.measuredRing', 'switch.frequncy', 'extra', 'clamp',
])];

/** Leaf paths holding a number (or a prefixed number) in some demo. */
const NUMERIC_PATHS = [...new Set(demos.flatMap((d) => leafPaths(d).filter((p) => parseSiNumber(getAt(d, p), '').ok)))];

function leafPaths(node: unknown, prefix = ''): string[] {
  if (typeof node !== 'object' || node === null || Array.isArray(node)) return [prefix];
  return Object.entries(node).flatMap(([k, v]) => leafPaths(v, prefix ? `${prefix}.${k}` : k));
}

const magnitude = fc.integer({ min: -30, max: 30 }).chain((e) => fc.double({ min: 1, max: 9.99, noNaN: true }).map((m) => m * 10 ** e));
const siText = fc.tuple(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.constantFrom('', 'f', 'p', 'n', 'u', 'µ', 'm', 'k', 'M', 'G', 'x'), fc.constantFrom('', 'H', 'F', 'V', 'A', 'Hz', 'Ω', 'ohm', 'W', 'uV'))
  .map(([v, p, u]) => `${Number(v.toPrecision(3))}${p}${u}`);
const deep = fc.integer({ min: 1, max: 3000 }).map((n) => JSON.parse('['.repeat(n) + ']'.repeat(n)) as unknown);
const replacement: fc.Arbitrary<unknown> = fc.oneof(
  magnitude, magnitude.map((x) => -x), fc.constantFrom(0, -0, 1, 0.5, 0.999999, 1e308, 5e-324, 2 ** 53),
  siText, fc.constantFrom('NaN', 'Infinity', '-Infinity', '', ' ', '1e999', '0x10', '1_000', '½', '１２', '1.2.3', '--1'),
  fc.string({ maxLength: 300 }), fc.string({ unit: 'grapheme', maxLength: 40 }),
  fc.constantFrom(null, true, false), fc.array(fc.integer(), { maxLength: 5 }), fc.dictionary(fc.string({ maxLength: 8 }), fc.integer(), { maxKeys: 5 }),
  deep, fc.constant(' '.repeat(5000) + '1'),
);
/** A field's value replaced (or, as undefined, deleted): mostly invalid input. */
const replace = fc.record({ path: fc.constantFrom(...PATHS), value: fc.option(replacement, { nil: undefined, freq: 6 }) })
  .map(({ path, value }) => (doc: Doc): void => setAt(doc, path, value));
/** A numeric field scaled by a power of ten or a factor near 1: mostly valid, often extreme, input. */
const scale = fc.record({ path: fc.constantFrom(...NUMERIC_PATHS), exponent: fc.integer({ min: -6, max: 6 }), factor: fc.double({ min: 0.5, max: 2, noNaN: true }), nearOne: fc.boolean() })
  .map(({ path, exponent, factor, nearOne }) => (doc: Doc): void => {
    const parsed = parseSiNumber(getAt(doc, path), '');
    if (parsed.ok) setAt(doc, path, parsed.value * (nearOne ? factor : 10 ** exponent));
  });
const mutated = fc.record({ demo: fc.integer({ min: 0, max: demos.length - 1 }), mutations: fc.array(fc.oneof({ arbitrary: scale, weight: 3 }, { arbitrary: replace, weight: 2 }), { minLength: 1, maxLength: 3 }) })
  .map(({ demo, mutations }) => {
    const doc = structuredClone(demos[demo]!);
    for (const mutate of mutations) mutate(doc);
    return doc;
  });

function getAt(doc: Doc, path: string): unknown {
  return path.split('.').reduce<unknown>((node, key) => (typeof node === 'object' && node !== null ? (node as Doc)[key] : undefined), doc);
}

/** Sets (or with undefined deletes) the value at a dotted path, making blocks on the way. */
function setAt(doc: Doc, path: string, value: unknown): void {
  const keys = path.split('.');
  let node: Doc = doc;
  for (const key of keys.slice(0, -1)) {
    if (typeof node[key] !== 'object' || node[key] === null || Array.isArray(node[key])) node[key] = {};
    node = node[key] as Doc;
  }
  if (value === undefined) delete node[keys[keys.length - 1]!];
  else node[keys[keys.length - 1]!] = value;
}

/** Text-level damage a parsed object cannot carry: duplicate keys, truncation, a byte-order mark. */
const textOf = fc.oneof({ arbitrary: fc.constant('plain'), weight: 6 }, fc.constantFrom('duplicate', 'truncate', 'bom')).map((kind) => (doc: Doc): string => {
  const text = JSON.stringify(doc, null, 1);
  switch (kind) {
    case 'duplicate': return text.replace('"name":', '"name": "first", "name":');
    case 'truncate': return text.slice(0, Math.floor(text.length / 2));
    case 'bom': return `\ufeff${text}`;
    default: return text;
  }
});

describe('fuzz: mutated demo scenarios through the validator', () => {
  it(`never throws, and every issue names a field with what was expected (${VALIDATOR_RUNS} runs)`, () => {
    fc.assert(fc.property(mutated, (doc) => {
      const issues = checkInputLimits(doc, []);
      const result = issues.length > 0 ? { ok: false as const, issues } : validateScenario(doc);
      if (!result.ok) {
        expect(result.issues.length).toBeGreaterThan(0);
        for (const issue of result.issues) {
          expect(issue.path).toMatch(/\S/);
          expect(issue.message).toMatch(/expected/);
          expect(issue.message.length).toBeLessThan(1000);
        }
      } else {
        expect(nonFinitePaths(result.scenario)).toEqual([]);
      }
    }), { numRuns: VALIDATOR_RUNS });
  });
});

describe('fuzz: mutated demo scenarios through the CLI', () => {
  let work: string;
  beforeAll(async () => {
    if (!existsSync(cli)) throw new Error(`${cli} is missing: run "npm run build" first (npm test does it)`);
    work = await mkdtemp(join(tmpdir(), 'flyclamp-fuzz-'));
  });
  afterAll(async () => { if (work) await rm(work, { recursive: true, force: true }); });

  it(`answers every one with exit 0, 1 or 2, a named field on 2, no stack trace, finite JSON on 0, and never writes over its input (${CLI_RUNS} runs)`, async () => {
    let case_ = 0;
    await fc.assert(fc.asyncProperty(mutated, textOf, fc.oneof({ arbitrary: fc.constant('none'), weight: 3 }, { arbitrary: fc.constant('fresh'), weight: 2 }, fc.constant('input')), fc.constantFrom([], ['--variant', 'bare'], ['--variant', 'clamp'], ['--variant', 'damped']), async (doc, render, csv, variant) => {
      const dir = join(work, String(case_++));
      await import('node:fs/promises').then((fs) => fs.mkdir(dir));
      const input = join(dir, 'scenario.json');
      const text = render(doc);
      await writeFile(input, text, 'utf8');
      const csvArgs = csv === 'none' ? [] : ['--csv', csv === 'input' ? input : join(dir, 'out.csv')];
      const result = spawnSync(process.execPath, [cli, 'simulate', input, '--json', '--max-seconds', String(RUN_SECONDS), ...variant, ...csvArgs], { encoding: 'utf8', timeout: HANG_MS, maxBuffer: 64 * 1024 * 1024 });
      expect(result.error, 'the run hung past its budget').toBeUndefined();
      const { status, stdout, stderr } = result;
      expect([0, 1, 2], `exit ${status}; stderr: ${stderr.slice(0, 500)}`).toContain(status);
      expect(stderr).not.toMatch(STACK_FRAME);
      expect(stderr).not.toMatch(/internal error/);
      expect(await readFile(input, 'utf8'), 'the input file changed').toBe(text);
      const files = (await readdir(dir)).sort();
      expect(files.filter((f) => f !== 'scenario.json' && f !== 'out.csv'), 'stray files').toEqual([]);
      if (csv === 'input') expect(status).not.toBe(0);
      if (status === 2) {
        // Every line after the heading names a field (or the file, or the flag) before its colon.
        const lines = stderr.split('\n').filter((l) => l && !/^flyclamp: bad input$/.test(l) && !/^warning: /.test(l));
        expect(lines.length).toBeGreaterThan(0);
        for (const line of lines) expect(line, stderr).toMatch(/^(--[\w-]+ \S+|[^\s:]+(?::\d+:\d+)?): .*expected/);
      }
      if (status === 0) {
        const report = JSON.parse(stdout) as Doc;
        expect(nonFinitePaths(report), stdout.slice(0, 300)).toEqual([]);
        // No non-finite value written as text either; the scenario's name is the user's own text
        // echoed back (the fuzzer once named a scenario "NaN").
        const { scenario: _name, ...rest } = report;
        expect(JSON.stringify(rest)).not.toMatch(/NaN|Infinity/);
      }
    }), { numRuns: CLI_RUNS });
  }, Math.max(60_000, CLI_RUNS * HANG_MS));
});
