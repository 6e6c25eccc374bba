import type { UniformLines } from './adi.ts';
import { componentsAt, type ComponentDiffusivities } from './dopants.ts';
import { activateField } from './activation.ts';
import { intrinsicCarriersCm3 } from './intrinsic.ts';
import { kinkElectronsCm3, surfaceElectronsCm3, tailFactor } from './phosphorus-kink.ts';
import { integrate, temperatureAt, type Plan, type SpeciesPlan, type StepPlan } from './plan.ts';
import { PRIMING_CALLS, primeOnce } from './priming.ts';

/**
 * Peaceman–Rachford's amplification tends to −1 for the stiffest modes, and where D depends
 * on C (non-commuting, step-to-step changing coefficients) such a mode can grow rather than
 * merely persist: seen where mesh numbers reach 1e5 and more (a cross-section 1e-6 µm deep,
 * every step growing). A value below −RINGING of the species' largest marks it; the next
 * DAMPED_STEPS steps are then split implicit, whose amplification for those modes is near 0.
 */
const RINGING = 1e-6;
export const DAMPED_STEPS = 3;

/**
 * Where no dopant has arrived, ν is the background's (substrate doping alone) at every node.
 * A row or column whose ν is within this fraction of it everywhere takes exactly that value,
 * and the stepper solves such lines, and such runs at the ends of the other lines, with shared
 * factors (about half the cost of factorising line by line; see FlatEnds in adi.ts). 1e-6 of
 * D moves a junction by about 5e-7 of its depth, far below the discretisation's own error;
 * ν on a line's faces stays one value seen from both sides, so the step stays exactly
 * conservative.
 */
const UNIFORM_TOLERANCE = 1e-6;

/** ∫ of each charge-state term of D over [t0, t1] within a step, µm². */
export function componentBudgets(st: StepPlan, s: SpeciesPlan, t0: number, t1: number): ComponentDiffusivities {
  if (st.startC === st.endC) {
    // At a fixed temperature the integral is the rate times the step.
    const d = componentsAt(s.dopant, st.startC!);
    const dt = t1 - t0;
    return { neutral: d.neutral * dt, single: d.single * dt, double: d.double * dt };
  }
  const f = (part: keyof ComponentDiffusivities) => integrate((t) => componentsAt(s.dopant, temperatureAt(st, t))[part], t0, t1, 2);
  return { neutral: f('neutral'), single: f('single'), double: f('double') };
}

/**
 * Concentration-dependent diffusivity of the charged-defect model over a time step, for
 * every species at once: n/ni from neutrality over all species and the substrate, taken
 * from the field extrapolated to the middle of the step, C + θ·(Cⁿ − Cⁿ⁻¹) with
 * θ = Δtₙ/(2Δtₙ₋₁). Evaluating D at the mid-step state keeps the stepping second order
 * with one solve per step; the first step of a process step has no history and lags (θ = 0).
 */
export class CoupledDiffusivity {
  private readonly previous: Record<string, Float64Array> = {};
  private readonly hasPrevious = new Set<string>();
  /** each species' largest value when prepare() last saw it, cm^-3 */
  private readonly highest: Record<string, number> = {};
  private readonly currentPeaks: Record<string, number> = {};
  private readonly net: Float64Array;
  /** ν at the nodes, row-major (both sweeps read it so) */
  private readonly nu: Float64Array;
  private ni = 1;
  /** the species whose ν prepare() already made, if any */
  private fused: SpeciesPlan | null = null;
  /** rows and columns where ν is the background's, as nodeBudgets() last found them */
  private readonly uniform: UniformLines;
  private readonly deviation: Float64Array;
  private uniformCount = 0;
  private temperatureC = 0;
  /** active concentration at mid-step and ∂a/∂C, for each species with an activation law */
  private readonly active: Record<string, Float64Array> = {};
  private readonly slope: Record<string, Float64Array> = {};
  /** each species' point-defect factor on D at every node for the coming step, or null (see setEnhancement) */
  private readonly enhancement: Record<string, Float64Array | null> = {};

  constructor(private readonly plan: Plan, cells: number) {
    for (const s of plan.species) {
      this.previous[s.name] = new Float64Array(cells);
      this.enhancement[s.name] = null;
      if (s.activation) {
        this.active[s.name] = new Float64Array(cells);
        this.slope[s.name] = new Float64Array(cells);
      }
    }
    this.net = new Float64Array(cells);
    this.nu = new Float64Array(cells);
    const { nx, nz } = plan.mesh;
    this.uniform = { nu: 0, rows: new Uint8Array(nz), columns: new Uint8Array(nx) };
    this.deviation = new Float64Array(nx);
    primeOnce(primeHotLoops);
  }

  restart(): void {
    this.hasPrevious.clear();
  }

  /**
   * The hook for point-defect enhancements (implant damage, oxidation): `factor[k]` multiplies
   * the species' D at node k over the coming step, on top of every other model (charged
   * defects, the Fair–Tsai tail, the active/inactive split). A caller with the interstitial
   * supersaturation S at each node and the species' interstitial fraction f_I passes
   * f_I·S + (1 − f_I)/S there, which enhances the interstitial-assisted part alone (and with
   * vacancies in equilibrium with the interstitials, retards the vacancy part). The array is
   * read, not copied, at each nodeBudgets(); null (the default) leaves D as it is. A species
   * with a factor is stepped with variable D whatever its model (see isVariable).
   */
  setEnhancement(name: string, factor: Float64Array | null): void {
    this.enhancement[name] = factor;
  }

  /** Whether a species' D varies from node to node in the coming step. */
  isVariable(s: SpeciesPlan): boolean {
    return s.model === 'charged-defect' || s.activation !== null || this.enhancement[s.name] !== null;
  }

  /** A species whose ν takes more than the charged-defect terms (kink, activation, an enhancement). */
  private extended(s: SpeciesPlan): boolean {
    return s.kink || s.activation !== null || this.enhancement[s.name] !== null;
  }

  /**
   * Each species' peak as the last prepare() saw it, where below its source peak (one record,
   * rewritten at each call: it is asked for at every time step).
   */
  peaks(sources: Record<string, number>): Record<string, number> {
    const out = this.currentPeaks;
    for (const name in sources) out[name] = sources[name];
    for (const name in this.highest) out[name] = Math.min(out[name] ?? this.highest[name], this.highest[name]);
    return out;
  }

  /**
   * Net doping at the middle of the coming step; remembers Cⁿ. Returns true when some
   * species has begun to ring: a value below −RINGING of its largest (rounding stays near
   * 1e-13 of it; a stiff mode flipping sign each step grows far past that). With one species
   * present, and that one concentration-dependent, its ν is made in the same pass (`budgets`
   * are each present species' term budgets for the step).
   */
  prepare(concentration: Record<string, Float64Array>, present: readonly SpeciesPlan[], budgets: readonly ComponentDiffusivities[],
          temperatureC: number, theta: number): boolean {
    const { net, plan } = this;
    this.ni = intrinsicCarriersCm3(temperatureC);
    this.temperatureC = temperatureC;
    this.fused = null;
    const substrate = plan.substrate.type === 'donor' ? plan.substrate.concentrationCm3 : -plan.substrate.concentrationCm3;
    let ringing = false;
    for (let k = 0; k < present.length; k++) {
      const s = present[k];
      const w = this.hasPrevious.has(s.name) ? theta : 0;
      const sign = s.type === 'donor' ? 1 : -1;
      if (s.activation) {
        // Only the active part counts in n and p: net from a = a(C) at mid-step.
        const active = this.active[s.name];
        extrapolate(active, concentration[s.name], this.previous[s.name], w);
        activateField(active, this.slope[s.name], active, s.activation.limitCm3(temperatureC), s.activation.clusterSize);
        addSigned(net, active, sign, k === 0, substrate);
      } else if (present.length === 1 && s.model === 'charged-defect' && !this.extended(s)) {
        const b = budgets[k];
        const double = s.type === 'donor' ? b.double : 0;
        const ref = this.background(s, b);
        const limit = UNIFORM_TOLERANCE * ref;
        const reach = backgroundReach(this.backgroundU(s), this.ni, b.neutral, b.single, double, s.fieldEnhancement, ref, limit);
        extrapolatedBudgets(this.nu, concentration[s.name], this.previous[s.name], w, sign, substrate, this.ni,
          b.neutral, b.single, double, s.fieldEnhancement, plan.mesh.nx, ref, limit, reach, this.uniform.rows, this.deviation);
        this.fused = s;
      } else {
        addExtrapolated(net, concentration[s.name], this.previous[s.name], w, sign, k === 0, substrate);
      }
      if (EXTREMES[0] < -RINGING * EXTREMES[1]) ringing = true;
      this.highest[s.name] = EXTREMES[1];
      this.hasPrevious.add(s.name);
    }
    return ringing;
  }

  /**
   * ν = D·τ at every node for one species from its term budgets; lines where it is the
   * background's (see UNIFORM_TOLERANCE) are set to exactly that and marked.
   */
  nodeBudgets(s: SpeciesPlan, b: ComponentDiffusivities): Float64Array {
    const { nx, nz } = this.plan.mesh;
    const { nu, uniform } = this;
    if (this.extended(s)) {
      this.extendedBudgets(s, b);
    } else if (this.fused !== s) {
      const sign = s.type === 'donor' ? 1 : -1;
      // An acceptor sees p/ni, which is n/ni with the sign of the net doping turned over.
      const ref = this.background(s, b);
      nodeBudgets(nu, this.net, this.ni, sign, b.neutral, b.single, s.type === 'donor' ? b.double : 0, s.fieldEnhancement,
        nx, ref, UNIFORM_TOLERANCE * ref, uniform.rows, this.deviation);
    }
    this.uniformCount = uniformColumns(nu, nx, nz, uniform.nu, UNIFORM_TOLERANCE * uniform.nu, uniform.rows, uniform.columns, this.deviation);
    return nu;
  }

  /**
   * ν with the models beyond the charged-defect terms: the Fair–Tsai tail where n is below
   * n_e (a kink exists when the highest n in the silicon is above it), then ∂a/∂C of the
   * active/inactive split (the total diffuses with D(a)·∂a/∂C), then the point-defect factor.
   * A species with the intrinsic model takes its D at n = ni everywhere. Uniform lines are
   * marked afresh against the value at the last node.
   */
  private extendedBudgets(s: SpeciesPlan, b: ComponentDiffusivities): void {
    const { nx } = this.plan.mesh;
    const { nu, net, ni, uniform } = this;
    const charged = s.model === 'charged-defect';
    const sign = s.type === 'donor' ? 1 : -1;
    const neutral = charged ? b.neutral : b.neutral + b.single + b.double;
    const single = charged ? b.single : 0;
    const double = charged && s.type === 'donor' ? b.double : 0;
    const field = charged && s.fieldEnhancement;
    nodeBudgets(nu, net, ni, sign, neutral, single, double, field, nx, -1, 0, uniform.rows, this.deviation);
    if (s.kink) {
      const ns = surfaceElectronsCm3(this.highest[s.name] ?? 0);
      const factor = tailFactor(this.temperatureC, ns);
      if (factor > 0) {
        const ne = kinkElectronsCm3(this.temperatureC);
        raiseBelow(nu, net, ne - (ni * ni) / ne, b.neutral + b.single * factor);
      }
    }
    if (s.activation) scale(nu, this.slope[s.name]);
    const enhancement = this.enhancement[s.name];
    if (enhancement !== null) scale(nu, enhancement);
    const ref = nu[nu.length - 1];
    uniform.nu = ref;
    markUniformRows(nu, nx, ref, UNIFORM_TOLERANCE * ref, uniform.rows, this.deviation);
  }

  /**
   * The active concentration of each species with an activation law, at `temperatureC`, into
   * `out` (for the field at the end of a run: the state quenched from the last heat).
   */
  static activeAt(s: SpeciesPlan, total: Float64Array, temperatureC: number, out: Float64Array): Float64Array {
    if (!s.activation) {
      out.set(total);
      return out;
    }
    activateField(out, null, total, s.activation.limitCm3(temperatureC), s.activation.clusterSize);
    return out;
  }

  /** u (see nodeBudgets) where the substrate alone sets n and p, for one species. */
  private backgroundU(s: SpeciesPlan): number {
    const { substrate } = this.plan;
    return ((substrate.type === 'donor' ? 1 : -1) * (s.type === 'donor' ? 1 : -1) * substrate.concentrationCm3) / (2 * this.ni);
  }

  /** ν there over the coming step; remembered as the uniform lines' value. */
  private background(s: SpeciesPlan, b: ComponentDiffusivities): number {
    this.uniform.nu = budgetAt(this.backgroundU(s), b.neutral, b.single, s.type === 'donor' ? b.double : 0, s.fieldEnhancement);
    return this.uniform.nu;
  }

  /** The lines nodeBudgets() last found uniform, or null where there were none. */
  uniformLines(): UniformLines | null {
    return this.uniformCount > 0 ? this.uniform : null;
  }
}

/** ν at one node from u (see nodeBudgets), for the background's value. */
function budgetAt(u: number, neutral: number, single: number, double: number, field: boolean): number {
  const root = Math.sqrt(u * u + 1);
  const r = u >= 0 ? u + root : 1 / (root - u);
  const h = field && u > 0 ? 1 + u / root : 1;
  return (neutral + single * r + double * r * r) * h;
}

/**
 * The largest concentration (cm^-3) of a lone species at which its ν is within `limit` of
 * the background's `ref` (u = `background` there; u grows by C/2ni): ν grows with u when
 * no term is negative, so every lower concentration is within it too. −1 where a term is
 * negative (no such bound is claimed).
 */
function backgroundReach(background: number, ni: number, neutral: number, single: number, double: number, field: boolean,
                         ref: number, limit: number): number {
  if (neutral < 0 || single < 0 || double < 0) return -1;
  const within = (c: number) => budgetAt(background + c / (2 * ni), neutral, single, double, field) - ref <= limit;
  let high = ni;
  while (within(high) && high < 1e30) high *= 1e3;
  let low = 0;
  for (let k = 0; k < 64; k++) {
    const mid = 0.5 * (low + high);
    if (within(mid)) low = mid;
    else high = mid;
  }
  return low;
}

// The hot loops of CoupledDiffusivity, each a function of its own over typed arrays.

/** Factors for priming scale(). */
const FACTORS = Float64Array.of(1, 0.5, 2, 1);

/** The lowest and highest value addExtrapolated saw in C. */
const EXTREMES = new Float64Array(2);

/**
 * Runs each hot loop below PRIMING_CALLS times over a few values, both signs and with and
 * without the field factor, once per thread (primeOnce), so that the code after each loop has type
 * feedback before the loop is compiled mid-call (see priming.ts).
 */
function primeHotLoops(): void {
  const c = Float64Array.of(1.5e20, 2.5e18, 0.5, -1.5e-3);
  const prev = new Float64Array(c.length);
  const net = new Float64Array(c.length);
  const nu = new Float64Array(c.length);
  const rows = new Uint8Array(2);
  const columns = new Uint8Array(2);
  const deviation = new Float64Array(2);
  for (let r = 0; r < PRIMING_CALLS; r++) {
    const sign = r % 2 === 0 ? 1 : -1;
    const field = r % 4 < 2;
    addExtrapolated(net, c, prev, 0.5, sign, r % 3 === 0, 1.5e15);
    // As a 2 × 2 cross-section, with and without rows and columns at the background.
    const ref = 4.5e-3;
    const limit = (r % 3 === 0 ? 1 : 1e-9) * ref;
    nodeBudgets(nu, net, 7.5e18, sign, 1.5e-3, 2.5e-3, 0.5e-3, field, 2, ref, limit, rows, deviation);
    uniformColumns(nu, 2, 2, ref, limit, rows, columns, deviation);
    extrapolatedBudgets(nu, c, prev, 0.5, sign, 1.5e15, 7.5e18, 1.5e-3, 2.5e-3, 0.5e-3, field, 2, ref, limit, r % 2 === 0 ? 1e19 : -1, rows, deviation);
    uniformColumns(nu, 2, 2, ref, limit, rows, columns, deviation);
    extrapolate(nu, c, prev, 0.5);
    addSigned(net, nu, sign, r % 3 === 0, 1.5e15);
    raiseBelow(nu, net, r % 2 === 0 ? 1e20 : -1, 3.5e-3);
    scale(nu, FACTORS);
    activateField(nu, prev, c, 1e20, 2 + (r % 3) * 5);
    markUniformRows(nu, 2, ref, limit, rows, deviation);
  }
}

/** out = max(C + w·(C − C_prev), 0); then C_prev = C. Leaves C's extremes in EXTREMES. */
function extrapolate(out: Float64Array, c: Float64Array, prev: Float64Array, w: number): void {
  let lowest = Infinity;
  let highest = -Infinity;
  for (let k = 0; k < c.length; k++) {
    const ck = c[k];
    const mid = ck + w * (ck - prev[k]);
    out[k] = mid > 0 ? mid : 0;
    prev[k] = ck;
    lowest = ck < lowest ? ck : lowest;
    highest = ck > highest ? ck : highest;
  }
  EXTREMES[0] = lowest;
  EXTREMES[1] = highest;
}

/** net += sign·a, or with `first` net = base + sign·a. */
function addSigned(net: Float64Array, a: Float64Array, sign: number, first: boolean, base: number): void {
  for (let k = 0; k < a.length; k++) net[k] = (first ? base : net[k]) + sign * a[k];
}

/** ν = max(ν, tail) wherever the net doping is below `below` (the tail side of the kink). */
function raiseBelow(nu: Float64Array, net: Float64Array, below: number, tail: number): void {
  for (let k = 0; k < nu.length; k++) if (net[k] < below && nu[k] < tail) nu[k] = tail;
}

/** ν *= f, node by node. */
function scale(nu: Float64Array, f: Float64Array): void {
  for (let k = 0; k < nu.length; k++) nu[k] *= f[k];
}

/**
 * Row by row: marks (and sets to exactly `ref`) each row whose ν is within `limit` of `ref`,
 * and keeps each column's largest |ν − ref| in `deviation` for uniformColumns.
 */
function markUniformRows(nu: Float64Array, nx: number, ref: number, limit: number, rows: Uint8Array, deviation: Float64Array): void {
  deviation.fill(0);
  for (let j = 0, start = 0; start < nu.length; j++, start += nx) {
    let worst = 0;
    for (let k = start, i = 0; i < nx; k++, i++) {
      const d = Math.abs(nu[k] - ref);
      worst = Math.max(worst, d);
      deviation[i] = Math.max(deviation[i], d);
    }
    rows[j] = markRow(nu, start, nx, worst, ref, limit);
  }
}

/**
 * net += sign·max(C + w·(C − C_prev), 0), or with `first` net = base + the same (one pass
 * instead of a fill and an add); then C_prev = C. Leaves C's extremes in EXTREMES.
 */
function addExtrapolated(net: Float64Array, c: Float64Array, prev: Float64Array, w: number, sign: number, first: boolean, base: number): void {
  let lowest = Infinity;
  let highest = -Infinity;
  for (let k = 0; k < c.length; k++) {
    const ck = c[k];
    const mid = ck + w * (ck - prev[k]);
    net[k] = (first ? base : net[k]) + sign * (mid > 0 ? mid : 0);
    prev[k] = ck;
    lowest = ck < lowest ? ck : lowest;
    highest = ck > highest ? ck : highest;
  }
  EXTREMES[0] = lowest;
  EXTREMES[1] = highest;
}

/**
 * ν = (ν⁰ + ν¹·r + ν²·r²)·h at every node, r = n/ni for a donor (sign +1) or p/ni for an
 * acceptor (sign −1), from neutrality: with u = ±N/2ni, r = u + √(u² + 1) (see intrinsic.ts;
 * for u < 0 the reciprocal form 1/(√(u² + 1) − u) keeps the digits). h = 1 + |u|/√(u² + 1)
 * on the species whose type carries the net doping (u > 0), else 1. Row by row (nx nodes):
 * a row whose ν is within `limit` of `ref` everywhere is set to exactly `ref` and marked in
 * `rows`; `deviation` keeps each column's largest |ν − ref| for uniformColumns.
 */
function nodeBudgets(nu: Float64Array, net: Float64Array, ni: number, sign: number, neutral: number, single: number, double: number,
                     field: boolean, nx: number, ref: number, limit: number, rows: Uint8Array, deviation: Float64Array): void {
  const scale = sign / (2 * ni);
  deviation.fill(0);
  for (let j = 0, start = 0; start < net.length; j++, start += nx) {
    let worst = 0;
    for (let k = start, i = 0; i < nx; k++, i++) {
      const u = net[k] * scale;
      const root = Math.sqrt(u * u + 1);
      const r = u >= 0 ? u + root : 1 / (root - u);
      const h = field && u > 0 ? 1 + u / root : 1;
      const v = (neutral + single * r + double * r * r) * h;
      nu[k] = v;
      const d = Math.abs(v - ref);
      worst = Math.max(worst, d);
      deviation[i] = Math.max(deviation[i], d);
    }
    rows[j] = markRow(nu, start, nx, worst, ref, limit);
  }
}

/** 1, with the row set to exactly `ref`, where its largest |ν − ref| is within `limit`; else 0 (a NaN too). */
function markRow(nu: Float64Array, start: number, nx: number, worst: number, ref: number, limit: number): number {
  if (!(worst <= limit)) return 0;
  nu.fill(ref, start, start + nx);
  return 1;
}

/**
 * addExtrapolated and nodeBudgets in one pass over each row, for a single species: the
 * extrapolation C + w·(C − C_prev) (at least 0), C_prev = C and C's extremes in EXTREMES;
 * then ν = `ref`, evaluating nothing, on the nodes before the row's first value beyond
 * `reach` (see backgroundReach) and after its last, and elsewhere ν with net = base +
 * sign·value, as nodeBudgets makes it. The ν lines are nodeBudgets' own, written out again
 * on purpose: as a function of its own called from both loops, ν came back boxed whenever
 * the call was not inlined (1–7 scavenges a solve against 0).
 */
function extrapolatedBudgets(nu: Float64Array, c: Float64Array, prev: Float64Array, w: number, sign: number, base: number, ni: number,
                             neutral: number, single: number, double: number, field: boolean, nx: number, ref: number, limit: number,
                             reach: number, rows: Uint8Array, deviation: Float64Array): void {
  const scale = sign / (2 * ni);
  let lowest = Infinity;
  let highest = -Infinity;
  deviation.fill(0);
  for (let j = 0, start = 0; start < c.length; j++, start += nx) {
    const end = start + nx;
    let top = 0;
    for (let k = start; k < end; k++) {
      const ck = c[k];
      const mid = ck + w * (ck - prev[k]);
      prev[k] = ck;
      lowest = ck < lowest ? ck : lowest;
      highest = ck > highest ? ck : highest;
      const value = mid > 0 ? mid : 0;
      nu[k] = value;
      top = Math.max(top, value);
    }
    if (top <= reach) {
      nu.fill(ref, start, end);
      rows[j] = 1;
      continue;
    }
    // The first and last node beyond the reach: there is one, since the top is (a NaN, which
    // Math.max carries to the top, stops both scans too).
    let first = start;
    while (nu[first] <= reach) first++;
    let last = end - 1;
    while (nu[last] <= reach) last--;
    // Outside [first, last], ν is the background's within the limit: exactly `ref`.
    nu.fill(ref, start, first);
    nu.fill(ref, last + 1, end);
    let worst = 0;
    for (let k = first, i = first - start; k <= last; k++, i++) {
      const u = (base + sign * nu[k]) * scale;
      const root = Math.sqrt(u * u + 1);
      const r = u >= 0 ? u + root : 1 / (root - u);
      const h = field && u > 0 ? 1 + u / root : 1;
      const v = (neutral + single * r + double * r * r) * h;
      nu[k] = v;
      const d = Math.abs(v - ref);
      worst = Math.max(worst, d);
      deviation[i] = Math.max(deviation[i], d);
    }
    rows[j] = markRow(nu, start, nx, worst, ref, limit);
  }
  EXTREMES[0] = lowest;
  EXTREMES[1] = highest;
}

/**
 * After nodeBudgets or extrapolatedBudgets: marks each column whose ν is within `limit` of
 * `ref` at every node and sets it to exactly `ref` (the marked rows already are). Returns
 * the number of rows and columns marked.
 */
function uniformColumns(nu: Float64Array, nx: number, nz: number, ref: number, limit: number,
                        rows: Uint8Array, columns: Uint8Array, deviation: Float64Array): number {
  let count = 0;
  for (let j = 0; j < nz; j++) count += rows[j];
  for (let i = 0; i < nx; i++) {
    const flat = deviation[i] <= limit ? 1 : 0;
    columns[i] = flat;
    count += flat;
    if (flat === 0) continue;
    for (let j = 0; j < nz; j++) if (rows[j] === 0) nu[j * nx + i] = ref;
  }
  return count;
}

/** The active part of each species with an activation law, at the end of the recipe's last heat. */
export function activeParts(plan: Plan, concentration: Record<string, Float64Array>): Record<string, Float64Array> {
  const out: Record<string, Float64Array> = {};
  let last: number | null = null;
  for (const st of plan.steps) if (st.endC !== null && st.seconds > 0) last = st.endC;
  for (const s of plan.species) {
    if (!s.activation || last === null) continue;
    out[s.name] = CoupledDiffusivity.activeAt(s, concentration[s.name], last, new Float64Array(concentration[s.name].length));
  }
  return out;
}
