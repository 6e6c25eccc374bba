import * as z from 'zod/mini';
import type { $ZodIssue, $ZodShape } from 'zod/v4/core';
import { BUILTIN_DOPANTS } from './dopants.ts';
import { AMBIENTS } from './oxidation.ts';
import { DIFFUSION_MODELS, RecipeError } from './recipe-terms.ts';

/**
 * The recipe contract ("edgewise.recipe/1") and its validation. Every failure becomes one
 * RecipeError naming the field (as a path like `steps[1].minutes`) and what is allowed.
 */
export { DIFFUSION_MODELS, RecipeError };

import { RECIPE_SCHEMA_ID } from './schema-ids.ts';

export { RECIPE_SCHEMA_ID };

/** Temperatures the diffusivity tables are meant for; silicon melts at 1414 °C. */
const TEMPERATURE_RANGE_C = [600, 1400] as const;
/** Longest step accepted, minutes (about ten weeks). */
const MAX_MINUTES = 1e5;

function formatNumber(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  return a >= 1e5 || a < 1e-3 ? v.toExponential().replace('e+', 'e') : String(v);
}

function describeValue(input: unknown): string {
  if (input === undefined) return 'nothing';
  if (input === null) return 'null';
  if (typeof input === 'number') return Number.isNaN(input) ? 'NaN' : formatNumber(input);
  if (typeof input === 'string') return JSON.stringify(input.length > 40 ? `${input.slice(0, 40)}…` : input);
  if (Array.isArray(input)) return `a list of ${input.length}`;
  if (typeof input === 'object') return 'an object';
  return String(input);
}

type Issue = { input?: unknown };

function explain(allowed: string) {
  return (iss: Issue) => (iss.input === undefined ? `is required: ${allowed}` : `must be ${allowed} (got ${describeValue(iss.input)})`);
}

/** A finite number in a range, with one message for every way of missing it. */
function num(unit: string, lo: number, hi: number, loExclusive = false) {
  const allowed = `a number ${loExclusive ? 'above' : 'from'} ${formatNumber(lo)} ${loExclusive ? 'and up to' : 'to'} ${formatNumber(hi)}${unit ? ` ${unit}` : ''}`;
  const error = explain(allowed);
  return z.number({ error }).check(loExclusive ? z.gt(lo, { error }) : z.gte(lo, { error }), z.lte(hi, { error }));
}

function int(lo: number, hi: number) {
  const error = explain(`a whole number from ${lo} to ${hi}`);
  return z.int({ error }).check(z.gte(lo, { error }), z.lte(hi, { error }));
}

/** An object that rejects unknown keys, naming the ones it accepts. */
function strict<T extends $ZodShape>(shape: T) {
  const keys = Object.keys(shape).join(', ');
  return z.strictObject(shape, {
    error: (iss) => {
      if (iss.code === 'unrecognized_keys') return `unknown key ${iss.keys.map((k) => JSON.stringify(k)).join(', ')} (allowed: ${keys})`;
      if (iss.code === 'invalid_type') return iss.input === undefined ? `is required: an object with ${keys}` : `must be an object with ${keys} (got ${describeValue(iss.input)})`;
      return undefined;
    },
  });
}

/**
 * Keys every JavaScript object inherits. A dopant named `toString` would be found in any
 * lookup table (`table[name]`, `name in table`) without being in it, so none is a dopant name.
 */
const INHERITED_NAMES = new Set(Object.getOwnPropertyNames(Object.prototype));

const dopantName = z
  .string({ error: explain('a dopant name (B, P, As, Sb or one defined under "dopants")') })
  .check(
    z.regex(/^[A-Za-z][A-Za-z0-9_-]{0,31}$/, { error: explain('a dopant name of letters, digits, "_" or "-", starting with a letter, at most 32 long') }),
    z.refine((name: string) => !INHERITED_NAMES.has(name), { error: (iss) => `must not be ${JSON.stringify(iss.input)}: JavaScript reserves that name; choose another` }),
  );

/** A record's error: what is wrong with a key, where a key is at fault; `otherwise` for the rest. */
function keyOr(otherwise: (iss: Issue) => string) {
  return (iss: Issue & { code?: string; issues?: readonly { message: string }[] }) =>
    iss.code === 'invalid_key' && iss.issues?.[0] ? iss.issues[0].message : otherwise(iss);
}

/** A species of the recipe's own may not take a built-in name: it would silently replace the built-in one. */
const userDopantName = dopantName.check(z.refine((name: string) => !Object.hasOwn(BUILTIN_DOPANTS, name), {
  error: (iss) => `${JSON.stringify(iss.input)} is a built-in dopant (${Object.keys(BUILTIN_DOPANTS).join(', ')}); a species of the recipe's own needs another name`,
}));

const concentration = num('cm^-3', 1e10, 1e22);
const temperatureC = num('°C (the diffusivity tables cover this range)', TEMPERATURE_RANGE_C[0], TEMPERATURE_RANGE_C[1]);
const minutes = num('minutes', 0, MAX_MINUTES, true);
const coordinate = num('µm', 0, 1e4);

/** A fixed temperature, or a ramp [start, end] linear in time over the step. */
const temperatureOrRamp = z.union([temperatureC, z.tuple([temperatureC, temperatureC])], {
  error: explain('a temperature in °C from 600 to 1400, or a ramp [start, end] of two'),
});

const windowPair = z.tuple([coordinate, coordinate], {
  error: explain('a window [x0, x1] of two numbers in µm'),
});

const rectangle = z.tuple([coordinate, coordinate, coordinate, coordinate], {
  error: explain('a rectangle [x0, y0, x1, y1] of four numbers in µm'),
});

const predeposition = strict({
  kind: z.literal('predeposition'),
  dopant: dopantName,
  surfaceConcentrationCm3: z.union([concentration, z.literal('solubility')], {
    error: explain('a number from 1e10 to 1e22 cm^-3, or "solubility"'),
  }),
  temperatureC: temperatureOrRamp,
  minutes,
});

const dose = num('cm^-2', 0, 1e18, true);

const film = strict({
  kind: z.literal('film'),
  dopant: dopantName,
  doseCm2: dose,
  temperatureC: z.optional(temperatureOrRamp),
  minutes: z.optional(minutes),
});

const implant = strict({
  kind: z.literal('implant'),
  dopant: dopantName,
  doseCm2: dose,
  projectedRangeUm: num('µm', 0, 20),
  straggleUm: num('µm', 0, 10, true),
  lateralStraggleUm: z.optional(num('µm', 0, 10, true)),
});

/** The gas over the wafer during a heat: an oxidising one grows oxide in the windows (see oxidation.ts). */
const ambient = z.enum(AMBIENTS, { error: explain(`one of ${AMBIENTS.map((a) => `"${a}"`).join(', ')}`) });

const heat = (kind: 'drive-in' | 'anneal') => strict({ kind: z.literal(kind), temperatureC: temperatureOrRamp, minutes, ambient: z.optional(ambient) });

export const STEP_KINDS = ['predeposition', 'film', 'implant', 'drive-in', 'anneal'] as const;

const STEP_SCHEMAS = [predeposition, film, implant, heat('drive-in'), heat('anneal')] as const;

/** Every key some kind of step takes. */
const STEP_KEYS: readonly string[] = [...new Set(STEP_SCHEMAS.flatMap((schema) => Object.keys(schema.shape)))];

const step = z.discriminatedUnion('kind', [...STEP_SCHEMAS], {
  error: (iss) => {
    const input = iss.input as { kind?: unknown } | undefined;
    if (input === null || typeof input !== 'object' || Array.isArray(input)) return `must be a step object with a "kind" (got ${describeValue(input)})`;
    if (input.kind === undefined) {
      const guess = closestKey('kind', Object.keys(input).filter((k) => !STEP_KEYS.includes(k)));
      if (guess !== null) return `${JSON.stringify(guess)} is not a key here; did you mean "kind"? (one of ${STEP_KINDS.join(', ')})`;
    }
    return `must be one of ${STEP_KINDS.join(', ')} (got ${describeValue(input.kind)})`;
  },
});

const arrhenius = strict({ D0Cm2PerS: num('cm^2/s', 0, 1e6, true), EaEv: num('eV', 0, 10, true) });

/** A species of the recipe's own: the neutral term, optional charged-defect terms and solubility. */
const userDopant = strict({
  type: z.enum(['donor', 'acceptor'], { error: explain('"donor" or "acceptor"') }),
  D0Cm2PerS: num('cm^2/s', 0, 1e6, true),
  EaEv: num('eV', 0, 10, true),
  singlyCharged: z.optional(arrhenius),
  doublyCharged: z.optional(arrhenius),
  solubilityCm3: z.optional(z.array(z.tuple([temperatureC, concentration]), { error: explain('a list of [temperature °C, concentration cm^-3] pairs') })
    .check(z.minLength(2, { error: 'must list at least two [temperature °C, concentration cm^-3] pairs' }))),
});

const model = z.enum(DIFFUSION_MODELS, { error: explain(`one of ${DIFFUSION_MODELS.join(', ')}`) });

/**
 * How diffusivity depends on the doping: `intrinsic` (D at n = ni, concentration-independent)
 * or `charged-defect` (each charge-state term weighted by (n/ni)^k or (p/ni), with the
 * built-in-field enhancement for the dominant species). Per species overrides the default.
 */
const diffusion = strict({
  model: z.optional(model),
  species: z.optional(z.record(dopantName, model, { error: explain('an object of dopant name → model') })),
  fieldEnhancement: z.optional(z.boolean({ error: explain('true or false') })),
});

const onOff = z.boolean({ error: explain('true or false') });

/**
 * A switch per high-concentration model, so that an engineer can see what each contributes.
 * Left out, each is on where its species and step call for it: `phosphorusKink` (Fair–Tsai
 * kink and tail) for phosphorus with the charged-defect model, `clustering` (active/inactive
 * split) for arsenic and boron, `ted` (implant damage) and `oxidationEnhanced` (an oxidising
 * ambient) for the species they enhance. Set to true for a recipe whose species it cannot
 * apply to, a switch is refused.
 */
const physics = strict({
  phosphorusKink: z.optional(onOff),
  clustering: z.optional(onOff),
  ted: z.optional(onOff),
  oxidationEnhanced: z.optional(onOff),
});

const meshOptions = strict({
  refine: z.optional(num('(1 = default mesh)', 0.25, 8)),
  surfaceSpacingUm: z.optional(num('µm', 1e-4, 100)),
  edgeSpacingUm: z.optional(num('µm', 1e-4, 100)),
  maxSpacingUm: z.optional(num('µm', 1e-4, 1000)),
  columns: z.optional(int(8, 4000)),
  rows: z.optional(int(8, 4000)),
});

const numerics = strict({
  stepGrowth: z.optional(num('(ratio of successive time steps)', 1.001, 3)),
  startupSteps: z.optional(int(0, 20)),
});

/**
 * A sweep carried by the recipe itself: the same values the CLI's --widths and --set take
 * (a range "start:step:stop" or a list). Planning a single run ignores it.
 */
const sweepValues = z.union([z.string(), z.array(z.number())], { error: explain('a range "start:step:stop" or a list of numbers') });
const sweep = strict({
  widthsUm: z.optional(sweepValues),
  set: z.optional(z.record(z.string(), sweepValues, { error: explain('an object of recipe path → values') })),
});

/** Reverse biases of the electrical rules: at most this many, each up to this many volts. */
export const MAX_BIAS_POINTS = 16;
export const MAX_BIAS_V = 5000;
const reverseBias = num('V (a reverse bias)', 0, MAX_BIAS_V);

/**
 * The electrical rules at room temperature (electrical.ts): each window's region under the
 * reverse biases `biasV`; `spacingBiasV` is the bias at which `edgewise spacing` finds the
 * punch-through spacing (punch-through.ts; the largest of `biasV` when left out).
 */
const electrical = strict({
  biasV: z.array(reverseBias, { error: explain(`a list of reverse biases, each from 0 to ${MAX_BIAS_V} V`) })
    .check(z.minLength(1, { error: 'must list at least one reverse bias in V' }), z.maxLength(MAX_BIAS_POINTS, { error: `must list at most ${MAX_BIAS_POINTS} reverse biases` })),
  spacingBiasV: z.optional(reverseBias),
});

export const recipeSchema = strict({
  schema: z.optional(z.literal(RECIPE_SCHEMA_ID, { error: explain(`"${RECIPE_SCHEMA_ID}"`) })),
  title: z.optional(z.string({ error: explain('text') }).check(z.maxLength(500, { error: explain('text of at most 500 characters') }))),
  substrate: strict({ dopant: dopantName, concentrationCm3: num('cm^-3', 1e10, 1e21) }),
  crossSection: strict({ widthUm: num('µm', 0, 1e4, true), lengthUm: z.optional(num('µm', 0, 1e4, true)), depthUm: z.optional(num('µm', 0, 1e3, true)) }),
  mask: strict({
    windows: z.optional(z.array(windowPair, { error: explain('a list of windows [x0, x1] in µm') })
      .check(z.minLength(1, { error: 'must list at least one window [x0, x1] in µm' }), z.maxLength(256, { error: 'must list at most 256 windows' }))),
    rectangles: z.optional(z.array(rectangle, { error: explain('a list of rectangles [x0, y0, x1, y1] in µm') })
      .check(z.minLength(1, { error: 'must list at least one rectangle [x0, y0, x1, y1] in µm' }), z.maxLength(64, { error: 'must list at most 64 rectangles' }))),
  }).check(z.superRefine((mask, ctx) => {
    // A 2D cross-section (windows) or a 3D plan view (rectangles): one or the other.
    if (mask.windows !== undefined && mask.rectangles !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['rectangles'], message: 'cannot be given with mask.windows: windows [x0, x1] make a 2D cross-section, rectangles [x0, y0, x1, y1] a 3D plan view; give one of them' });
    } else if (mask.windows === undefined && mask.rectangles === undefined) {
      ctx.addIssue({ code: 'custom', path: ['windows'], message: 'is required: a list of windows [x0, x1] in µm (2D cross-section), or give mask.rectangles [x0, y0, x1, y1] in µm (3D)' });
    }
  })),
  diffusion: z.optional(diffusion),
  physics: z.optional(physics),
  dopants: z.optional(z.record(userDopantName, userDopant, { error: keyOr(explain('an object of dopant name → { type, D0Cm2PerS, EaEv }')) })),
  mesh: z.optional(meshOptions),
  numerics: z.optional(numerics),
  sweep: z.optional(sweep),
  electrical: z.optional(electrical),
  steps: z.array(step, { error: explain('a list of steps') })
    .check(z.minLength(1, { error: 'must list at least one step' }), z.maxLength(200, { error: 'must list at most 200 steps' })),
});

export type Recipe = z.infer<typeof recipeSchema>;
export type Step = Recipe['steps'][number];

/** `steps[1].minutes`; a key that is not a plain name is quoted, `dopants["a b"]`, so the field stays one line. */
function pathToField(path: readonly PropertyKey[]): string {
  let out = '';
  for (const p of path) {
    if (typeof p === 'number') out += `[${p}]`;
    else if (typeof p === 'string' && /^[A-Za-z_][\w-]*$/.test(p)) out += out ? `.${p}` : p;
    else out += `[${JSON.stringify(String(p))}]`;
  }
  return out || 'recipe';
}

/**
 * Keys that name an object's prototype machinery. The schema would silently drop `__proto__`
 * from a record (dopants, diffusion.species, sweep.set); a recipe never needs any of them, so
 * each is refused by name, wherever it sits. The walk keeps its own stack, so a deeply
 * nested value cannot overflow the call stack here.
 */
const RESERVED_KEYS = new Set(['__proto__', 'constructor', 'prototype']);

interface Visit {
  value: unknown;
  key: PropertyKey | null;
  parent: Visit | null;
}

function pathOf(visit: Visit): PropertyKey[] {
  const path: PropertyKey[] = [];
  for (let v: Visit | null = visit; v && v.key !== null; v = v.parent) path.push(v.key);
  return path.reverse();
}

function checkReservedKeys(input: unknown): void {
  const stack: Visit[] = [{ value: input, key: null, parent: null }];
  // YAML aliases share a value between places (or make a cycle): each object is seen once.
  const seen = new Set<object>();
  while (stack.length > 0) {
    const visit = stack.pop()!;
    const { value } = visit;
    if (value === null || typeof value !== 'object' || seen.has(value)) continue;
    seen.add(value);
    if (Array.isArray(value)) {
      for (let k = value.length - 1; k >= 0; k--) stack.push({ value: value[k], key: k, parent: visit });
      continue;
    }
    const keys = Object.keys(value);
    for (const key of keys) {
      if (RESERVED_KEYS.has(key)) throw new RecipeError(pathToField(pathOf(visit)), `unknown key ${JSON.stringify(key)} (JavaScript reserves it; no recipe key is named so)`);
    }
    for (let k = keys.length - 1; k >= 0; k--) stack.push({ value: (value as Record<string, unknown>)[keys[k]], key: keys[k], parent: visit });
  }
}

/** Edits (insert, delete, replace) that turn one word into the other (Levenshtein distance). */
function editDistance(a: string, b: string): number {
  let row = Array.from({ length: b.length + 1 }, (_, k) => k);
  for (let i = 1; i <= a.length; i++) {
    const next = [i];
    for (let j = 1; j <= b.length; j++) next[j] = Math.min(row[j] + 1, next[j - 1] + 1, row[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
    row = next;
  }
  return row[b.length];
}

/** Of keys a recipe does not know, the one most likely meant for `wanted` (fewest edits, case aside); null for none. */
function closestKey(wanted: string, unknown: readonly string[]): string | null {
  let best: string | null = null;
  let bestDistance = Infinity;
  for (const key of unknown) {
    const d = editDistance(key.toLowerCase(), wanted.toLowerCase());
    if (d < bestDistance) {
      best = key;
      bestDistance = d;
    }
  }
  return best;
}

const samePath = (a: readonly PropertyKey[], b: readonly PropertyKey[]) => a.length === b.length && a.every((p, k) => p === b[k]);

/**
 * One message for the first problem. A required key that is missing beside a key the object
 * does not know is most likely a misspelling: both are named in one line
 * (`substrate: "concentration" is not a key here; did you mean "concentrationCm3"?`).
 */
function firstProblem(issues: readonly $ZodIssue[]): RecipeError {
  const issue = issues[0];
  const missing = issue.code === 'invalid_type' && issue.input === undefined && issue.path.length > 0 ? issue.path : null;
  if (missing) {
    const where = missing.slice(0, -1);
    const wanted = String(missing[missing.length - 1]);
    const unknown = issues.find((i) => i.code === 'unrecognized_keys' && samePath(i.path, where));
    const guess = unknown?.code === 'unrecognized_keys' ? closestKey(wanted, unknown.keys) : null;
    if (guess !== null) return new RecipeError(pathToField(where), `${JSON.stringify(guess)} is not a key here; did you mean ${JSON.stringify(wanted)}?`);
  }
  // A step's missing "kind" is reported at the key; a misspelling of it belongs to the step.
  const path = /^".*" is not a key here;/.test(issue.message) && issue.path[issue.path.length - 1] === 'kind' ? issue.path.slice(0, -1) : issue.path;
  return new RecipeError(pathToField(path), issue.message);
}

/** Validates the shape of a recipe; cross-field rules are checked when it is planned. */
export function parseRecipe(input: unknown): Recipe {
  checkReservedKeys(input);
  const result = recipeSchema.safeParse(input);
  if (!result.success) throw firstProblem(result.error.issues);
  return result.data;
}
