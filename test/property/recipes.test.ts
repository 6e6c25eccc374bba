import fc from 'fast-check';
import { describe, it } from 'vitest';
import { DEFAULT_LIMITS, parseRecipe, planRecipe, RecipeError, simulate, type Plan, type PlanLimits } from '../../packages/solver2d/src/index.ts';
import { mutated, wellFormed, wild, type Generated } from './generators.ts';
import { NO_LIMITS, onSmallMesh, solve } from './small.ts';
import { check, count, logUniform, printCountsAfterAll } from './support.ts';

/**
 * Generated recipes through parseRecipe and planRecipe, and (on small meshes) the whole solve:
 * no exception but RecipeError, an error always one line naming the field, a well-formed
 * recipe always planned, and always a report without NaN.
 */
printCountsAfterAll('recipes.test.ts');

/** A field as recipe.ts names it: `recipe`, or `a.b[2].c`. */
const KEY = String.raw`\["(?:[^"\\]|\\.)*"\]`;
const FIELD = new RegExp(String.raw`^(recipe|([A-Za-z_][\w-]*|${KEY})(\[\d+\]|\.[A-Za-z_][\w-]*|${KEY})*)$`);

function expectRecipeError(run: () => unknown, what: string): RecipeError | null {
  try {
    run();
    return null;
  } catch (e) {
    if (!(e instanceof RecipeError)) throw new Error(`${what}: threw ${(e as Error).name}: ${(e as Error).message}`);
    if (e.message.includes('\n')) throw new Error(`${what}: the message spans lines: ${JSON.stringify(e.message)}`);
    if (!FIELD.test(e.field)) throw new Error(`${what}: ${JSON.stringify(e.field)} is not a field path`);
    if (!e.message.startsWith(`${e.field}: `)) throw new Error(`${what}: the message does not start with the field: ${e.message}`);
    return e;
  }
}

/** What a plan must hold whatever the recipe: the limit, and a face on every window edge. */
function checkPlan(plan: Plan, limits: PlanLimits = DEFAULT_LIMITS): void {
  const { mesh, mask } = plan;
  if (mesh.nx * mesh.nz > limits.maxMeshPoints) throw new Error(`a plan of ${mesh.nx * mesh.nz} points passed the limit ${limits.maxMeshPoints}`);
  const faces = new Set(mesh.xFaces);
  for (const [x0, x1] of mask.windows) if (!faces.has(x0) || !faces.has(x1)) throw new Error(`window [${x0}, ${x1}] does not lie on faces`);
  for (const w of plan.warnings) if (w.includes('\n')) throw new Error(`a warning spans lines: ${w}`);
}

type Case =
  | { kind: 'well-formed'; g: Generated }
  | { kind: 'mutated'; recipe: unknown; field: string; what: string }
  | { kind: 'wild'; recipe: unknown; what: string };

const cases: fc.Arbitrary<Case> = fc.oneof(
  { weight: 3, arbitrary: wellFormed().map((g): Case => ({ kind: 'well-formed', g })) },
  { weight: 5, arbitrary: mutated(wellFormed()).map((m): Case => ({ kind: 'mutated', ...m })) },
  { weight: 2, arbitrary: wild(wellFormed()).map((w): Case => ({ kind: 'wild', ...w })) },
);

/** One case of "parse and plan". */
function parseAndPlan(c: Case): void {
  if (c.kind === 'well-formed') {
    const e = expectRecipeError(() => checkPlan(planRecipe(parseRecipe(c.g.recipe))), 'well-formed');
    // Over the default mesh limit is the one refusal a well-formed recipe may get (a given
    // depth far below the profile, or a fine mesh): valid, but more than the machine is asked for.
    if (e && e.field === 'mesh' && /above the limit of/.test(e.detail)) count('parse and plan, well-formed but over the mesh limit');
    else if (e) throw new Error(`a well-formed recipe was refused: ${e.message}\n${JSON.stringify(c.g.recipe)}`);
    return;
  }
  const e = expectRecipeError(() => checkPlan(planRecipe(parseRecipe(c.recipe))), c.what);
  if (c.kind === 'wild') return;
  if (!e) throw new Error(`${c.what}: accepted\n${JSON.stringify(c.recipe)}`);
  // The field broken, or one inside it (a list of two numbers where windows go is refused at windows[0]).
  if (e.field !== c.field && !e.field.startsWith(`${c.field}[`) && !e.field.startsWith(`${c.field}.`)) {
    throw new Error(`${c.what}: expected an error naming ${c.field}, got ${e.message}`);
  }
}

describe('generated recipes, valid and invalid', () => {
  it('parse and plan: well-formed → a plan; one thing broken → a one-line RecipeError naming that field; anything else → a plan or a RecipeError', () => {
    check('parse and plan', cases, (c) => {
      const started = performance.now();
      try {
        parseAndPlan(c);
      } finally {
        count(`parse and plan, of which ${c.kind}`, performance.now() - started);
      }
    }, 10_000);
  });

  it('mesh limit: a plan stays within maxMeshPoints or says how many points it would need, and the limit never changes the mesh', () => {
    check('mesh limit', fc.tuple(wellFormed(), logUniform(100, 1e6)), ([g, maxMeshPoints]) => {
      const limits = { ...DEFAULT_LIMITS, maxMeshPoints: Math.round(maxMeshPoints) };
      const recipe = parseRecipe(g.recipe);
      const free = planRecipe(recipe, NO_LIMITS);
      const points = free.mesh.nx * free.mesh.nz;
      const e = expectRecipeError(() => checkPlan(planRecipe(recipe, limits), limits), 'limited plan');
      if (points <= limits.maxMeshPoints) {
        if (e) throw new Error(`refused at ${points} points under a limit of ${limits.maxMeshPoints}: ${e.message}`);
        return;
      }
      const m = /^would need (\d+) mesh points \((\d+) × (\d+), about \d+ MiB at the peak\), above the limit of (\d+); /.exec(e?.detail ?? '');
      if (!e || e.field !== 'mesh' || !m) throw new Error(`${points} points over ${limits.maxMeshPoints}: ${e ? e.message : 'accepted'}`);
      if (Number(m[1]) !== points || Number(m[2]) * Number(m[3]) !== points || Number(m[4]) !== limits.maxMeshPoints) {
        throw new Error(`the message's counts ${m.slice(1).join(', ')} are not the mesh's ${free.mesh.nx} × ${free.mesh.nz}`);
      }
    }, 300);
  });

  it('work limit: a solve stays within maxPointSteps or is refused before it starts, saying what it would take', () => {
    check('work limit', fc.tuple(wellFormed({ noMesh: true }).map((g) => onSmallMesh(g.recipe)), logUniform(1e2, 1e6)), ([recipe, maxPointSteps]) => {
      const limits = { ...DEFAULT_LIMITS, maxPointSteps: Math.round(maxPointSteps) };
      const plan = planRecipe(parseRecipe(recipe), limits);
      let progressed = false;
      const e = expectRecipeError(() => {
        const sim = simulate(plan, { onProgress: () => { progressed = true; } });
        const steps = sim.stepRecords.reduce((n, s) => n + s.timeSteps, 0);
        const work = steps * plan.mesh.nx * plan.mesh.nz;
        if (work > limits.maxPointSteps) throw new Error(`ran ${work} point-steps under a limit of ${limits.maxPointSteps}`);
      }, 'limited solve');
      if (!e) return;
      const m = /^would take (\d+) time steps on (\d+) mesh points /.exec(e.detail);
      if (e.field !== 'numerics' || !m) throw new Error(`unexpected refusal: ${e.message}`);
      if (Number(m[2]) !== plan.mesh.nx * plan.mesh.nz || Number(m[1]) * Number(m[2]) <= limits.maxPointSteps) throw new Error(`the counts do not add up: ${e.message}`);
      if (progressed) throw new Error('refused after time steps had run: the check must come first');
    }, 200);
  });

  it('mesh.columns and mesh.rows: the plan has at most that many, and no fewer than one per interval less', () => {
    // plan.ts scales the spacing rule by bisection until the axis has at most the count asked
    // for; each interval between fixed faces rounds its cells up, so at the boundary the count
    // can drop by at most one per interval (window edges and walls bound 2·windows + 1 of them
    // across, one down).
    check('mesh.columns/rows', fc.tuple(wellFormed({ noMesh: true }), fc.integer({ min: 8, max: 60 }), fc.integer({ min: 8, max: 40 })), ([g, columns, rows]) => {
      const plan = planRecipe(parseRecipe({ ...g.recipe, mesh: { columns, rows } }));
      const intervals = new Set([0, plan.mesh.widthUm, ...plan.mask.windows.flat()]).size - 1;
      if (plan.mesh.nx > columns || plan.mesh.nx < columns - intervals) throw new Error(`${plan.mesh.nx} columns for ${columns} asked (${intervals} intervals)`);
      if (plan.mesh.nz > rows || plan.mesh.nz < rows - 1) throw new Error(`${plan.mesh.nz} rows for ${rows} asked`);
    }, 20);
  });

  it('small solves: every well-formed recipe gives a report whose every number is finite', () => {
    // solve() checks the report (small.ts, checkReport), as it does after every solve of the
    // property files: here on the generator's recipes as they come, on a small mesh.
    check('small solve gives a report', wellFormed({ noMesh: true }), (g) => {
      solve(onSmallMesh(g.recipe));
    }, 300);
  });
});
