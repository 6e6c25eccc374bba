/**
 * Time steps for one process step: geometrically growing from `first` so that Δt/t stays
 * about constant. Diffusion from a discontinuity is self-similar in √t, so a constant Δt/t
 * spends the same effort on every stage of the profile's growth; the steps sum to the
 * duration exactly.
 */
export function geometricSteps(totalSeconds: number, firstSeconds: number, growth: number): Float64Array {
  if (!(totalSeconds > 0)) return new Float64Array(0);
  if (firstSeconds >= totalSeconds) return Float64Array.of(totalSeconds);
  const count = Math.max(1, Math.ceil(Math.log(1 + (totalSeconds * (growth - 1)) / firstSeconds) / Math.log(growth)));
  // Solve first·(r^count − 1)/(r − 1) = total for r in (1, growth] by bisection.
  const sum = (r: number) => (Math.abs(r - 1) < 1e-12 ? firstSeconds * count : (firstSeconds * (r ** count - 1)) / (r - 1));
  let lo = 1;
  let hi = growth;
  if (sum(lo) >= totalSeconds) {
    return new Float64Array(count).fill(totalSeconds / count);
  }
  for (let k = 0; k < 100; k++) {
    const mid = 0.5 * (lo + hi);
    if (sum(mid) < totalSeconds) lo = mid;
    else hi = mid;
  }
  const r = 0.5 * (lo + hi);
  const steps = new Float64Array(count);
  let dt = firstSeconds;
  let used = 0;
  for (let k = 0; k < count; k++) {
    steps[k] = dt;
    used += dt;
    dt *= r;
  }
  steps[count - 1] += totalSeconds - used;
  return steps;
}
