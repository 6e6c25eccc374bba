import fc from 'fast-check';
import { logUniform, round3, uniform } from './support.ts';

/**
 * Generated recipes. Every scenario is invented. "Well-formed" recipes satisfy every rule the
 * README and recipe.ts/plan.ts state (ranges, windows inside and apart, a heat after each
 * source, solubility only where the table has it), over a practical part of the ranges: the
 * last heat of 900–1200 °C for at least 5 min, widths up to 40 µm, so that the default mesh is
 * well under the default limits. Mutations then break one thing each, naming the field the
 * error must name.
 */

export type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
export type Recipe = { [key: string]: Json };

/** Species of the recipe's own, with Arrhenius terms in the range of the built-in ones (recipe.ts ranges). */
const userDopant = (type: 'donor' | 'acceptor') => fc.record({
  type: fc.constant(type),
  D0Cm2PerS: logUniform(0.1, 10),
  EaEv: uniform(3.2, 3.8),
  singlyCharged: fc.option(fc.record({ D0Cm2PerS: logUniform(0.1, 10), EaEv: uniform(3.4, 4) }), { nil: undefined }),
  solubilityCm3: fc.option(fc.constant([[800, 1e20], [1200, 5e20]]), { nil: undefined }),
}).map(stripUndefined);

function stripUndefined<T extends Record<string, unknown>>(o: T): T {
  for (const k of Object.keys(o)) if (o[k] === undefined) delete o[k];
  return o;
}

const BUILTIN = ['B', 'P', 'As', 'Sb'] as const;
const temperature = (lo: number, hi: number) => fc.oneof(
  { weight: 3, arbitrary: uniform(lo, hi).map(round3) },
  { weight: 1, arbitrary: fc.tuple(uniform(lo, hi), uniform(lo, hi)).map(([a, b]) => [round3(a), round3(b)]) },
);

interface Source {
  step: Recipe;
  dopant: string;
}

/** A source step for `dopant` (predeposition, film or implant); solubility only with a table 800–1200 °C. */
function source(dopant: string, hasTable: boolean): fc.Arbitrary<Source> {
  const predeposition = fc.record({
    kind: fc.constant('predeposition'),
    dopant: fc.constant(dopant),
    surfaceConcentrationCm3: hasTable ? fc.oneof(logUniform(1e17, 1e21), fc.constant('solubility')) : logUniform(1e17, 1e21),
    temperatureC: temperature(850, 1150),
    minutes: logUniform(1, 120),
  });
  const film = fc.record({
    kind: fc.constant('film'),
    dopant: fc.constant(dopant),
    doseCm2: logUniform(1e11, 1e16),
    heat: fc.option(fc.record({ temperatureC: temperature(900, 1150), minutes: logUniform(1, 60) }), { nil: undefined }),
  }).map(({ heat, ...f }) => ({ ...f, ...(heat ?? {}) }));
  const implant = fc.record({
    kind: fc.constant('implant'),
    dopant: fc.constant(dopant),
    doseCm2: logUniform(1e11, 1e16),
    projectedRangeUm: uniform(0, 0.3).map(round3),
    straggleUm: uniform(0.005, 0.1),
    lateralStraggleUm: fc.option(uniform(0.005, 0.1), { nil: undefined }),
  }).map(stripUndefined);
  return fc.oneof(predeposition, film, implant).map((step) => ({ step: step as Recipe, dopant }));
}

const heat = fc.record({
  kind: fc.constantFrom('drive-in', 'anneal'),
  temperatureC: temperature(900, 1200),
  minutes: logUniform(5, 300),
});

/** Windows inside [0, width], apart from each other; a window may touch a wall. */
function windows(widthUm: number, count: number): fc.Arbitrary<number[][]> {
  return fc.tuple(
    fc.array(uniform(0.1, 1), { minLength: count, maxLength: count }),
    fc.array(uniform(0.1, 1), { minLength: count + 1, maxLength: count + 1 }),
    fc.boolean(), fc.boolean(),
  ).map(([open, gaps, leftWall, right]) => {
    // One window over the whole width can leave plan.ts a single column, which it does not
    // refuse cleanly (see hostile.test.ts); here at most one wall is touched by a lone window.
    const rightWall = right && !(leftWall && count === 1);
    if (leftWall) gaps[0] = 0;
    if (rightWall) gaps[count] = 0;
    const total = open.reduce((a, b) => a + b, 0) + gaps.reduce((a, b) => a + b, 0);
    const out: number[][] = [];
    let x = (gaps[0] / total) * widthUm;
    for (let k = 0; k < count; k++) {
      const x0 = round3(x);
      x += (open[k] / total) * widthUm;
      const x1 = Math.min(widthUm, round3(x));
      out.push([x0, x1]);
      x += (gaps[k + 1] / total) * widthUm;
    }
    if (rightWall) out[count - 1][1] = widthUm;
    return out;
  });
}

export interface Generated {
  recipe: Recipe;
  /** species introduced by the steps, in order */
  introduced: string[];
}

export interface Options {
  /** leave out the optional mesh key (callers that set their own mesh) */
  noMesh?: boolean;
}

/** A recipe that satisfies every stated rule; planning it must succeed. */
export function wellFormed(options: Options = {}): fc.Arbitrary<Generated> {
  return fc.record({
    widthUm: uniform(4, 40).map(round3),
    windowCount: fc.integer({ min: 1, max: 3 }),
    substrate: fc.constantFrom('P', 'B', 'As', 'Sb', 'Q', 'R'),
    background: logUniform(1e13, 1e18),
    q: userDopant('acceptor'),
    r: userDopant('donor'),
    species: fc.array(fc.constantFrom(...BUILTIN, 'Q', 'R'), { minLength: 1, maxLength: 2 }),
    seedSteps: fc.nat(),
  }).chain((g) => {
    const dopants: Record<string, Json> = {};
    const used = new Set<string>([g.substrate, ...g.species]);
    if (used.has('Q')) dopants.Q = g.q as unknown as Json;
    if (used.has('R')) dopants.R = g.r as unknown as Json;
    const hasTable = (name: string) => (BUILTIN as readonly string[]).includes(name) || (name === 'Q' && 'solubilityCm3' in g.q) || (name === 'R' && 'solubilityCm3' in g.r);
    // One block per species: its source, and a heat after it (the last heat is always there).
    const blocks = g.species.map((name, k) => fc.tuple(source(name, hasTable(name)), k === g.species.length - 1 ? heat.map((h) => h as Recipe | null) : fc.option(heat, { nil: null })));
    return fc.record({
      windows: windows(g.widthUm, g.windowCount),
      blocks: fc.tuple(...blocks),
      depthUm: fc.option(uniform(2, 20).map(round3), { nil: undefined }),
      diffusion: fc.option(fc.record({
        model: fc.option(fc.constantFrom('intrinsic', 'charged-defect'), { nil: undefined }),
        fieldEnhancement: fc.option(fc.boolean(), { nil: undefined }),
        species: fc.option(fc.constantFrom('intrinsic', 'charged-defect').map((m) => ({ [g.species[0]]: m })), { nil: undefined }),
      }).map(stripUndefined), { nil: undefined }),
      // mesh.columns/rows are planned by bisection (60 axis builds, 35–200 ms a plan): they
      // have a property of their own in recipes.test.ts rather than a share of every case here.
      mesh: options.noMesh ? fc.constant(undefined) : fc.option(fc.oneof(
        fc.record({ refine: uniform(0.5, 2) }),
        fc.record({ surfaceSpacingUm: uniform(0.005, 0.1), edgeSpacingUm: uniform(0.01, 0.2), maxSpacingUm: uniform(0.2, 2) }),
      ), { nil: undefined }),
      numerics: fc.option(fc.record({
        stepGrowth: fc.option(uniform(1.01, 3), { nil: undefined }),
        startupSteps: fc.option(fc.integer({ min: 0, max: 20 }), { nil: undefined }),
      }).map(stripUndefined), { nil: undefined }),
      sweep: fc.option(fc.constant({ widthsUm: '2:2:6' }), { nil: undefined }),
      title: fc.option(fc.string({ maxLength: 60 }), { nil: undefined }),
      schema: fc.option(fc.constant('edgewise.recipe/1'), { nil: undefined }),
    }).map((v) => {
      const steps: Json[] = [];
      for (const [src, h] of v.blocks) {
        steps.push(src.step);
        if (h) steps.push(h);
      }
      const recipe: Recipe = stripUndefined({
        schema: v.schema,
        title: v.title,
        substrate: { dopant: g.substrate, concentrationCm3: g.background },
        // Spacings given with the depth left to the plan can ask for a surface cell deeper than
        // the whole profile, which plan.ts does not refuse cleanly (see hostile.test.ts): given
        // spacings come with a depth here.
        crossSection: stripUndefined({ widthUm: g.widthUm, depthUm: v.depthUm ?? (v.mesh && 'surfaceSpacingUm' in v.mesh ? 5 : undefined) }),
        mask: { windows: v.windows },
        ...(Object.keys(dopants).length > 0 ? { dopants } : {}),
        diffusion: v.diffusion && Object.keys(v.diffusion).length > 0 ? v.diffusion as Json : undefined,
        mesh: v.mesh as Json | undefined,
        numerics: v.numerics && Object.keys(v.numerics).length > 0 ? v.numerics as Json : undefined,
        sweep: v.sweep,
        steps,
      }) as Recipe;
      return { recipe, introduced: [...new Set(g.species)] };
    });
  });
}

// ---------------------------------------------------------------------------------------
// Mutations: each breaks one rule and says which field the error must name.

export interface Mutated {
  recipe: unknown;
  /** the field the RecipeError must name, exactly */
  field: string;
  what: string;
}

type Path = (string | number)[];

function fieldOf(path: Path): string {
  let out = '';
  for (const p of path) out += typeof p === 'number' ? `[${p}]` : out ? `.${p}` : p;
  return out || 'recipe';
}

function at(root: unknown, path: Path): unknown {
  let v = root as Record<string | number, unknown>;
  for (const p of path) v = v[p] as Record<string | number, unknown>;
  return v;
}

function set(root: unknown, path: Path, value: unknown): void {
  const parent = at(root, path.slice(0, -1)) as Record<string | number, unknown>;
  // defineProperty: a key such as "__proto__" becomes an own key, as JSON.parse makes it.
  Object.defineProperty(parent, path[path.length - 1], { value, enumerable: true, writable: true, configurable: true });
}

function remove(root: unknown, path: Path): void {
  delete (at(root, path.slice(0, -1)) as Record<string | number, unknown>)[path[path.length - 1]];
}

/** Numeric fields with their allowed range (recipe.ts), where present in this recipe. */
function numericFields(r: Recipe): { path: Path; lo: number; hi: number; loOpen: boolean; integer: boolean }[] {
  const out: { path: Path; lo: number; hi: number; loOpen: boolean; integer: boolean }[] = [];
  const add = (path: Path, lo: number, hi: number, loOpen = false, integer = false) => {
    if (typeof at(r, path) === 'number') out.push({ path, lo, hi, loOpen, integer });
  };
  add(['substrate', 'concentrationCm3'], 1e10, 1e21);
  add(['crossSection', 'widthUm'], 0, 1e4, true);
  add(['crossSection', 'depthUm'], 0, 1e3, true);
  (r.steps as Recipe[]).forEach((_, k) => {
    add(['steps', k, 'minutes'], 0, 1e5, true);
    add(['steps', k, 'temperatureC'], 600, 1400);
    add(['steps', k, 'surfaceConcentrationCm3'], 1e10, 1e22);
    add(['steps', k, 'doseCm2'], 0, 1e18, true);
    add(['steps', k, 'projectedRangeUm'], 0, 20);
    add(['steps', k, 'straggleUm'], 0, 10, true);
  });
  const mesh = r.mesh as Recipe | undefined;
  if (mesh) {
    add(['mesh', 'refine'], 0.25, 8);
    add(['mesh', 'surfaceSpacingUm'], 1e-4, 100);
    add(['mesh', 'columns'], 8, 4000, false, true);
    add(['mesh', 'rows'], 8, 4000, false, true);
  }
  if (r.numerics) {
    add(['numerics', 'stepGrowth'], 1.001, 3);
    add(['numerics', 'startupSteps'], 0, 20, false, true);
  }
  for (const name of Object.keys((r.dopants as Recipe | undefined) ?? {})) {
    add(['dopants', name, 'D0Cm2PerS'], 0, 1e6, true);
    add(['dopants', name, 'EaEv'], 0, 10, true);
  }
  return out;
}

/** Objects that reject unknown keys, where present. */
function strictObjects(r: Recipe): Path[] {
  const out: Path[] = [[], ['substrate'], ['crossSection'], ['mask']];
  (r.steps as Recipe[]).forEach((_, k) => out.push(['steps', k]));
  for (const key of ['mesh', 'numerics', 'diffusion', 'sweep'] as const) if (r[key]) out.push([key]);
  for (const name of Object.keys((r.dopants as Recipe | undefined) ?? {})) out.push(['dopants', name]);
  return out;
}

/** Required fields, where their parent is present. */
function requiredFields(r: Recipe): Path[] {
  const out: Path[] = [['substrate'], ['substrate', 'dopant'], ['substrate', 'concentrationCm3'], ['crossSection'], ['crossSection', 'widthUm'], ['mask'], ['mask', 'windows'], ['steps']];
  (r.steps as Recipe[]).forEach((s, k) => {
    if (s.kind !== 'implant' && s.kind !== 'film') out.push(['steps', k, 'temperatureC'], ['steps', k, 'minutes']);
    if (s.dopant !== undefined) out.push(['steps', k, 'dopant']);
    if (s.kind === 'film' || s.kind === 'implant') out.push(['steps', k, 'doseCm2']);
  });
  return out;
}

const offRange = (lo: number, hi: number, loOpen: boolean, integer: boolean) => fc.oneof(
  fc.constant(Number.NaN), fc.constant(Infinity), fc.constant(-Infinity), fc.constant(1e308), fc.constant(-1e308),
  ...(lo > 0 || loOpen ? [fc.constant(loOpen ? lo : lo / 2), fc.constant(-Number.MIN_VALUE)] : [fc.constant(lo - 1)]),
  fc.constant(hi * 2 + 1),
  ...(integer ? [fc.constant(lo + 0.5)] : []),
  ...(lo > 0 ? [fc.constant(5e-324)] : []),
);

/** Values of the wrong type; text starts with "#", so it is never a dopant name or a number by chance. */
const wrongType = fc.oneof(fc.string({ maxLength: 5 }).map((t) => `#${t}`), fc.boolean(), fc.constant(null), fc.constant([]), fc.constant({}), fc.constant([1, 2]));

export function mutated(base: fc.Arbitrary<Generated>): fc.Arbitrary<Mutated> {
  return base.chain(({ recipe, introduced }) => {
    const copy = () => structuredClone(recipe);
    const numbers = numericFields(recipe);
    const objects = strictObjects(recipe);
    const required = requiredFields(recipe);
    const steps = recipe.steps as Recipe[];
    const windowList = (recipe.mask as Recipe).windows as number[][];
    const width = (recipe.crossSection as Recipe).widthUm as number;
    const choices: fc.Arbitrary<Mutated>[] = [
      fc.constantFrom(...numbers).chain((f) => offRange(f.lo, f.hi, f.loOpen, f.integer).map((v) => {
        const r = copy();
        set(r, f.path, v);
        return { recipe: r, field: fieldOf(f.path), what: `${fieldOf(f.path)} = ${v}` };
      })),
      fc.tuple(fc.constantFrom(...numbers.map((f) => f.path), ...required.filter((p) => p.length > 1)), wrongType).map(([path, v]) => {
        const r = copy();
        set(r, path, v);
        return { recipe: r, field: fieldOf(path), what: `${fieldOf(path)} = ${JSON.stringify(v)}` };
      }),
      fc.constantFrom(...required).map((path) => {
        const r = copy();
        remove(r, path);
        return { recipe: r, field: fieldOf(path), what: `without ${fieldOf(path)}` };
      }),
      fc.tuple(fc.constantFrom(...objects), fc.constantFrom('heightUm', 'extra', 'Minutes', 'temperature', '')).map(([path, key]) => {
        const r = copy();
        set(r, [...path, key], 1);
        return { recipe: r, field: fieldOf(path), what: `unknown key ${key} in ${fieldOf(path)}` };
      }),
      fc.tuple(fc.constantFrom(...objects, ...(recipe.dopants ? [['dopants']] : [])), fc.constantFrom('__proto__', 'constructor', 'prototype')).map(([path, key]) => {
        const r = copy();
        set(r, [...path, key], { polluted: true });
        return { recipe: r, field: fieldOf(path), what: `${key} in ${fieldOf(path)}` };
      }),
      fc.tuple(fc.nat(steps.length - 1), fc.constantFrom('bake', 'Drive-in', '', 'oxidation')).map(([k, kind]) => {
        const r = copy();
        set(r, ['steps', k, 'kind'], kind);
        return { recipe: r, field: `steps[${k}].kind`, what: `steps[${k}].kind = ${kind}` };
      }),
      // Cross-field rules, checked when the recipe is planned (plan.ts).
      fc.nat(windowList.length - 1).map((k) => {
        const r = copy();
        set(r, ['mask', 'windows', k, 1], width + 1);
        // Each window is checked against the walls before any two are compared (plan.ts).
        return { recipe: r, field: `mask.windows[${k}]`, what: `window ${k} past the wall` };
      }),
      fc.nat(windowList.length - 1).map((k) => {
        const r = copy();
        const [x0] = windowList[k];
        set(r, ['mask', 'windows', k], [x0, x0]);
        return { recipe: r, field: `mask.windows[${k}]`, what: `window ${k} of zero width` };
      }),
      ...(windowList.length > 1 ? [fc.nat(windowList.length - 2).map((k) => {
        const r = copy();
        // Window k+1 starts where window k ends: touching windows must be merged.
        set(r, ['mask', 'windows', k + 1, 0], windowList[k][1]);
        return { recipe: r, field: `mask.windows[${k + 1}]`, what: `windows ${k} and ${k + 1} touching` };
      })] : []),
      fc.tuple(fc.nat(steps.length - 1), fc.constantFrom('Ga', 'In', 'toString', 'valueOf', 'hasOwnProperty')).map(([k, name]) => {
        const r = copy();
        const s = (r.steps as Recipe[])[k];
        if (s.dopant === undefined) return { recipe: { ...r, substrate: { dopant: name, concentrationCm3: 1e15 } }, field: 'substrate.dopant', what: `substrate ${name}` };
        s.dopant = name;
        return { recipe: r, field: `steps[${k}].dopant`, what: `steps[${k}].dopant = ${name}` };
      }),
      fc.constantFrom('Zz', 'Xq').map((name) => {
        const r = copy();
        if (introduced.includes(name)) throw new Error('test set-up: a generated species has a test-only name');
        r.diffusion = { species: { [name]: 'intrinsic' } };
        return { recipe: r, field: `diffusion.species.${name}`, what: `diffusion.species.${name} not introduced` };
      }),
      fc.constantFrom<[string, Json]>(['mask', { windows: [] }], ['steps', []], ['title', 'x'.repeat(501)], ['schema', 'edgewise.recipe/2']).map(([key, value]) => {
        const r = copy();
        r[key] = value;
        return { recipe: r, field: key === 'mask' ? 'mask.windows' : key, what: `${key} = ${JSON.stringify(value).slice(0, 30)}` };
      }),
      fc.constantFrom<unknown>([], 'recipe', 3, null, true).map((v) => ({ recipe: v, field: 'recipe', what: `the recipe is ${JSON.stringify(v)}` })),
    ];
    const film = steps.findIndex((s) => s.kind === 'film');
    if (film >= 0) {
      choices.push(fc.constantFrom('temperatureC', 'minutes').map((drop) => {
        const r = copy();
        const s = (r.steps as Recipe[])[film];
        s.temperatureC = 1000;
        s.minutes = 10;
        delete s[drop];
        return { recipe: r, field: `steps[${film}].${drop}`, what: `film without ${drop}` };
      }));
    }
    return fc.oneof(...choices);
  });
}

/**
 * Any JSON structure: text, booleans, null, lists and objects nested up to 3 deep, and numbers
 * that are out of every range or small. Numbers inside a range but at its far end (an
 * activation energy of 10 eV, D0 of 1e-200 cm²/s) are left out: plan.ts builds an axis of
 * 1e8 cells or more for them before its mesh limit is checked, and the process runs out of
 * memory (reported; no test can run that on a shared machine). Out-of-range numbers are
 * the mutations' business.
 */
const wildValue: fc.Arbitrary<Json> = fc.letrec<{ value: Json }>((tie) => ({
  value: fc.oneof(
    { depthSize: 'small', maxDepth: 3 },
    fc.string({ maxLength: 8 }),
    fc.boolean(),
    fc.constant(null),
    fc.integer({ min: -3, max: 4 }),
    fc.constantFrom(1e308, -1e308, 0, -0, 0.5, 1e-3, 12345.5),
    fc.array(tie('value'), { maxLength: 3 }),
    fc.dictionary(fc.string({ maxLength: 6 }), tie('value'), { maxKeys: 3 }),
  ),
})).value;

/** Any JSON value somewhere in a well-formed recipe: the error, if any, must still be a RecipeError. */
export function wild(base: fc.Arbitrary<Generated>): fc.Arbitrary<{ recipe: unknown; what: string }> {
  return base.chain(({ recipe }) => {
    const paths: Path[] = [];
    const walk = (v: unknown, path: Path) => {
      paths.push(path);
      if (Array.isArray(v)) v.forEach((x, k) => walk(x, [...path, k]));
      else if (v !== null && typeof v === 'object') for (const [k, x] of Object.entries(v)) walk(x, [...path, k]);
    };
    walk(recipe, []);
    return fc.tuple(fc.constantFrom(...paths.slice(1)), wildValue).map(([path, value]) => {
      const r = structuredClone(recipe);
      set(r, path, value);
      return { recipe: r, what: `${fieldOf(path)} = ${JSON.stringify(value)?.slice(0, 60)}` };
    });
  });
}
