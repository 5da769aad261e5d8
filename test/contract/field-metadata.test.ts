// The field table against the README's scenario tables (the user-facing documentation) and the
// validator: every documented field has metadata with the documented unit, and every field the
// validator accepts is documented.

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { SCENARIO_FIELDS, fieldAt, fieldUnit, fieldsOfBlock, SCENARIO_BLOCKS } from '../../src/contract/field-metadata.js';
import { readmeFieldPaths } from './readme-fields.js';

describe('field metadata', () => {
  const readmePaths = readmeFieldPaths(readFileSync(new URL('../../README.md', import.meta.url), 'utf8'));

  it('has every field of the README tables, and nothing the README does not document', () => {
    expect(readmePaths.length).toBeGreaterThan(50);
    expect(SCENARIO_FIELDS.map((f) => f.path).sort()).toEqual([...readmePaths].sort());
  });

  it('gives each path once, in a declared block', () => {
    const paths = SCENARIO_FIELDS.map((f) => f.path);
    expect(new Set(paths).size).toBe(paths.length);
    const fieldCount = SCENARIO_BLOCKS.reduce((n, block) => n + fieldsOfBlock(block.path).length, 0);
    expect(fieldCount).toBe(paths.length);
  });

  it('carries the units the README states', () => {
    expect(fieldUnit('transformer.leakageInductance')).toBe('H');
    expect(fieldUnit('switch.drainCapacitance')).toBe('F');
    expect(fieldUnit('design.voltageAllowance')).toBe('V');
    expect(fieldUnit('clamp.diodeForwardRecoveryRate')).toBe('A/s');
    expect(fieldUnit('simulation.maxCycles')).toBe('');
    expect(fieldUnit('name')).toBeUndefined();
    expect(fieldUnit('switch.nope')).toBeUndefined();
  });

  it('has a default for every defaulted field and none for a required one', () => {
    for (const field of SCENARIO_FIELDS) {
      if (field.presence === 'defaulted') expect(field.defaultText, field.path).toBeDefined();
      if (field.presence === 'required') expect(field.defaultText, field.path).toBeUndefined();
      expect(field.label.length, field.path).toBeGreaterThan(3);
      expect(field.help.length, field.path).toBeGreaterThan(3);
    }
    expect(fieldAt('design.voltageAllowance')?.defaultText).toBe('3%');
    expect(fieldAt('design.lossBudget')?.defaultText).toBe('10%');
  });
});

describe('the page can import the contract', () => {
  /** Run-time imports (not `import type`) reachable from a file, resolved relative to it. */
  function runtimeImports(entry: URL, seen = new Set<string>()): Set<string> {
    if (seen.has(entry.href)) return seen;
    seen.add(entry.href);
    const text = readFileSync(entry, 'utf8');
    for (const match of text.matchAll(/^(?:import|export)\s+(?!type\b)(?:[^'";]*?\sfrom\s+)?'([^']+)'/gm)) {
      const specifier = match[1]!;
      if (specifier.startsWith('.')) runtimeImports(new URL(specifier.replace(/\.js$/, '.ts'), entry), seen);
      else seen.add(specifier);
    }
    return seen;
  }

  it.each(['field-metadata.ts', 'scenario-schema.ts', 'api.ts', 'issues.ts'])('src/contract/%s reaches no node-only module at run time', (file) => {
    const reached = [...runtimeImports(new URL(`../../src/contract/${file}`, import.meta.url))];
    const packages = reached.filter((r) => !r.startsWith('file:'));
    expect(packages.filter((p) => p !== 'zod')).toEqual([]);
    const files = reached.filter((r) => r.startsWith('file:')).map((r) => r.replace(/^.*\/src\//, 'src/'));
    expect(files.every((f) => f.startsWith('src/contract/') || f.startsWith('src/circuit/')), files.join(', ')).toBe(true);
  });
});
