// A result leaves the program either finite and checked or as a failure with its reason: a number
// that came out NaN or infinite prints as `null` in JSON, which a reader takes for "no value".

/** Fields whose null is a stated answer ("none": no ring left, a design candidate without a damper, no loss budget), not a failed computation. */
const NULL_ALLOWED = new Set(['ringFrequency', 'damper', 'budget']);

/**
 * The relative mismatch of the per-period energy balance above which a variant's result is not
 * trusted. The demo scenarios close within 1e-6 at the default tolerances; a thousand times that
 * leaves room for tight corners while catching a balance that does not close at all.
 */
export const ENERGY_MISMATCH_LIMIT = 1e-3;

/** Paths (dotted, from `root`) of numbers that are NaN or infinite and of nulls where a number belongs. */
export function nonFinitePaths(value: unknown, root = ''): string[] {
  const out: string[] = [];
  const stack: Array<[unknown, string]> = [[value, root]];
  while (stack.length > 0) {
    const [v, path] = stack.pop()!;
    if (typeof v === 'number') {
      if (!Number.isFinite(v)) out.push(`${path} (${v})`);
    } else if (v === null) {
      if (!NULL_ALLOWED.has(path.slice(path.lastIndexOf('.') + 1))) out.push(`${path} (null)`);
    } else if (Array.isArray(v)) {
      v.forEach((item, i) => stack.push([item, `${path}[${i}]`]));
    } else if (typeof v === 'object' && !ArrayBuffer.isView(v)) {
      for (const [k, item] of Object.entries(v)) stack.push([item, path ? `${path}.${k}` : k]);
    }
  }
  return out.sort();
}

/** Why one variant's metrics cannot be reported, or undefined when they can. */
export function variantProblem(metrics: { energyBalance?: { relativeMismatch: number; supply: number } }): string | undefined {
  const bad = nonFinitePaths(metrics);
  if (bad.length > 0) {
    return `the result has no finite value for ${bad.join(', ')}${metrics.energyBalance && !(metrics.energyBalance.supply > 0) ? ' (the supply delivered no energy per period: check the part values for a wrong SI prefix)' : ''}`;
  }
  const mismatch = metrics.energyBalance?.relativeMismatch;
  if (mismatch !== undefined && Math.abs(mismatch) > ENERGY_MISMATCH_LIMIT) {
    return `the energy balance does not close (relative mismatch ${mismatch.toPrecision(3)}, limit ${ENERGY_MISMATCH_LIMIT}): the solver did not resolve this circuit; check the part values or tighten simulation.relativeTolerance`;
  }
  return undefined;
}

/** Splits a report's variants into the sound ones and the reasons for the others. */
export function soundVariants<M extends { energyBalance?: { relativeMismatch: number; supply: number } }>(variants: Partial<Record<string, M>>): { sound: Partial<Record<string, M>>; problems: string[] } {
  const sound: Partial<Record<string, M>> = {};
  const problems: string[] = [];
  for (const [name, m] of Object.entries(variants)) {
    if (!m) continue;
    const problem = variantProblem(m);
    if (problem) problems.push(`${name}: ${problem}`);
    else sound[name] = m;
  }
  return { sound, problems };
}
