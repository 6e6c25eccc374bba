/**
 * Axis ticks at "nice" numbers: steps of 1, 2 or 5 times a power of ten, chosen so that
 * about `target` ticks fall in the range (P.S. Heckbert, "Nice numbers for graph labels",
 * Graphics Gems, 1990). Ticks are multiples of the step, so 0 is one when it is in range.
 */
export interface Ticks {
  step: number;
  values: number[];
  /** decimals that show every tick exactly */
  decimals: number;
}

const NICE = [1, 2, 5, 10];

export function niceStep(span: number, target: number): number {
  const raw = span / Math.max(1, target);
  const power = 10 ** Math.floor(Math.log10(raw));
  const fraction = raw / power;
  // The nice fraction closest to the raw one in ratio, so the count stays near the target.
  let best = NICE[0];
  for (const n of NICE) if (Math.abs(Math.log(n / fraction)) < Math.abs(Math.log(best / fraction))) best = n;
  return best * power;
}

export function niceTicks(min: number, max: number, target = 5): Ticks {
  if (!(Number.isFinite(min) && Number.isFinite(max))) throw new Error(`ticks: range [${min}, ${max}] is not finite`);
  if (max < min) [min, max] = [max, min];
  if (max === min) return { step: 0, values: [min], decimals: decimalsOf(min) };
  const step = niceStep(max - min, target);
  const first = Math.ceil(min / step - 1e-9);
  const last = Math.floor(max / step + 1e-9);
  const values: number[] = [];
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  for (let k = first; k <= last; k++) values.push(Number((k * step).toFixed(decimals)));
  return { step, values, decimals };
}

function decimalsOf(v: number): number {
  const s = String(v);
  const dot = s.indexOf('.');
  return dot < 0 ? 0 : s.length - dot - 1;
}

export function formatTick(v: number, ticks: Ticks): string {
  return v.toFixed(ticks.decimals);
}
