import { DEFAULT_LIMITS, RecipeError, type PlanLimits } from '@edgewise/solver2d';
import { UsageError } from './errors.ts';
import type { OptionSpec } from './help.ts';

function formatCount(n: number): string {
  return n >= 1e5 ? n.toExponential().replace('e+', 'e') : String(n);
}

/**
 * The work limits a run is planned under, as command-line options: `--max-mesh-points N`
 * (memory: every field holds 8 bytes a point) and `--max-point-steps N` (time: mesh points ×
 * time steps). Defaults are the solver's DEFAULT_LIMITS. A recipe over a limit is refused
 * before any field is allocated, with what it would need and how to bring it down.
 */
export const LIMIT_OPTIONS = {
  'max-mesh-points': {
    type: 'string', value: 'N', defaultText: formatCount(DEFAULT_LIMITS.maxMeshPoints),
    help: 'the most mesh points a run may have (memory: about 75 MiB + 130 bytes a point in 2D); a recipe over it is refused before any field is allocated, with what it would need',
  },
  'max-point-steps': {
    type: 'string', value: 'N', defaultText: formatCount(DEFAULT_LIMITS.maxPointSteps),
    help: 'the most mesh points × time steps a run may take (time: 5–25 ns each per species on one core)',
  },
} as const satisfies Record<string, OptionSpec>;

export const LIMITS_USAGE = '[--max-mesh-points N] [--max-point-steps N]';

/**
 * Largest values the options take: 1e9 points is 8 GB a field, past what one process holds
 * (typed arrays stop near 2^32 elements); 1e15 point-steps is about a year on one core.
 */
const CEILING: PlanLimits = { maxMeshPoints: 1e9, maxPointSteps: 1e15 };

const OPTION: Record<keyof PlanLimits, string> = { maxMeshPoints: '--max-mesh-points', maxPointSteps: '--max-point-steps' };

function parseCount(text: string | undefined, key: keyof PlanLimits, what: string): number {
  const fallback = DEFAULT_LIMITS[key];
  if (text === undefined) return fallback;
  const n = /^\s*\d+(\.\d*)?(e\+?\d+)?\s*$/i.test(text) ? Number(text) : NaN;
  if (!(Number.isInteger(n) && n >= 1 && n <= CEILING[key])) {
    throw new UsageError(`${OPTION[key]}: must be a whole number from 1 to ${formatCount(CEILING[key])} ${what}, like 4000000 or 4e6 ` +
      `(default ${formatCount(fallback)}; got ${JSON.stringify(text)})`);
  }
  return n;
}

export function parseLimits(values: { 'max-mesh-points'?: string; 'max-point-steps'?: string }): PlanLimits {
  return {
    maxMeshPoints: parseCount(values['max-mesh-points'], 'maxMeshPoints', 'mesh points'),
    maxPointSteps: parseCount(values['max-point-steps'], 'maxPointSteps', 'point-steps (mesh points × time steps)'),
  };
}

/**
 * Runs `work` (planning or solving) and, when it stops at a limit, adds the option that
 * raises the limit to the solver's message, which says what the recipe would need and how to
 * lower that, and ends "or raise the limit".
 */
export function withLimitHint<T>(limits: PlanLimits | undefined, work: () => T): T {
  try {
    return work();
  } catch (e) {
    if (e instanceof RecipeError && /above the limit of/.test(e.detail)) {
      const key: keyof PlanLimits | null = e.field === 'mesh' ? 'maxMeshPoints' : e.field === 'numerics' ? 'maxPointSteps' : null;
      if (key) throw new RecipeError(e.field, `${e.detail} with ${OPTION[key]} N (now ${formatCount((limits ?? DEFAULT_LIMITS)[key])})`);
    }
    throw e;
  }
}
