/**
 * One recipe solved REPS times after three warm-up solves, for counting instructions: the
 * host's speed changes from second to second, an instruction count does not (to about 0.1 %).
 * Not a test; run it under valgrind (a Debian package, not a dependency of the project):
 *
 *   for reps in 0 2; do valgrind --tool=cachegrind --cache-sim=no --cachegrind-out-file=/dev/null \
 *     node --single-threaded scripts/run-ts.mjs test/bench/instructions.bench.ts examples/base-resistor.json charged-defect $reps; done
 *
 * Half the difference of the two "I refs" totals is one solve. The plans are those of the
 * nonlinear/linear comparison in solver.bench.ts (`modelPlans`).
 */
import { resolve } from 'node:path';
import { simulate } from '../../packages/solver2d/src/index.ts';
import { readRecipeFile } from '../../packages/cli/src/read-recipe.ts';
import { modelPlans } from './reference-case.ts';

const [file, model, reps] = [process.argv[2], process.argv[3], Number(process.argv[4])];
if (!file || (model !== 'intrinsic' && model !== 'charged-defect') || !(reps >= 0)) {
  process.stderr.write('usage: instructions.bench.ts RECIPE intrinsic|charged-defect REPS\n');
  process.exit(2);
}
const plans = modelPlans(await readRecipeFile(resolve(file)));
const plan = model === 'charged-defect' ? plans.nonlinear : plans.linear;
for (let r = 0; r < 3 + reps; r++) simulate(plan);
