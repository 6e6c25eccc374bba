import erf from '@stdlib/math-base-special-erf';
import { AdiStepper3d } from './adi3d.ts';
import { activeParts, componentBudgets, CoupledDiffusivity, DAMPED_STEPS } from './coupled-diffusivity.ts';
import type { ComponentDiffusivities } from './dopants.ts';
import { windowMean, type ImplantSpec } from './implant.ts';
import { keepLayout } from './layouts.ts';
import { openArea3d, type Mesh3d } from './mesh3d.ts';
import { temperatureAt, type Plan, type SpeciesPlan } from './plan.ts';
import { emptyFields, holdSource, SolverError, StoppedError, type LedgerEntry, type SimulateOptions, type Simulation, type StepRecord } from './simulation.ts';
import { checkWork, planClocks, type PlannedClock } from './step-clock.ts';
import type { Space3d } from './space3d.ts';
import { sourcePeaks, speedupOf } from './step-clock.ts';
import { concentrationFromDose, doseFromConcentrationUm, UM_TO_CM } from './units.ts';

/**
 * The time loop of a 3D recipe (mask.rectangles): the same steps, clocks, sources and
 * ledger as the 2D loop (simulate.ts), on the 3D stepper (adi3d.ts), whose second-order
 * scheme is Douglas–Gunn. Charged-defect species take D per node from the coupled
 * diffusivity of the 2D loop (coupled-diffusivity.ts), which reads the field as nz planes of
 * nx·ny nodes, with its step-growth hold and its damped steps where the field rings.
 * Concentrations are x-contiguous [z][y][x] on space.mesh.
 */
export function simulate3d(plan: Plan, space: Space3d, options: SimulateOptions = {}): Simulation {
  const { species, steps } = plan;
  const { mesh, mask } = space;
  const cells = mesh.nx * mesh.ny * mesh.nz;
  const peaks = sourcePeaks(plan);
  const clocks = planClocks(plan, peaks, finest3d(mesh));
  let total = clocks.reduce((n, c) => n + c.count, 0);
  checkWork(plan, total, cells);
  const { concentration, entered } = emptyFields(species, cells);
  const stepper = keepLayout(new AdiStepper3d(mesh, mask));
  // The coupled diffusivity sees the field as nz rows of nx·ny nodes (its uniform "rows" are
  // the z planes where no dopant has arrived).
  const nonlinear = species.some((s) => s.model === 'charged-defect' || s.activation !== null);
  const coupled = nonlinear ? keepLayout(new CoupledDiffusivity({ ...plan, mesh: { ...plan.mesh, nx: mesh.nx * mesh.ny, nz: mesh.nz } }, cells)) : null;
  const present: SpeciesPlan[] = [];
  const stepRecords: StepRecord[] = [];
  let done = 0;
  for (const st of steps) {
    const sp = st.dopant ? species.find((s) => s.name === st.dopant)! : null;
    if (sp && !present.includes(sp)) present.push(sp);
    if (sp && st.kind === 'film' && st.doseCm2 !== null) entered[sp.name] += placeFilm(concentration[sp.name], mesh, mask.open, st.doseCm2);
    if (sp && st.implant) entered[sp.name] += addImplant3d(concentration[sp.name], space, st.implant);
    const held = st.kind === 'predeposition' ? sp : null;
    const planned: PlannedClock = clocks[st.index];
    let issued = 0;
    let previousDt = 0;
    let damped = 0;
    coupled?.restart();
    for (;;) {
      const speedup = coupled && issued > 0 ? speedupOf(st, present, coupled.peaks(peaks)) : Infinity;
      const timeStep = planned.clock.next(speedup);
      if (!timeStep) break;
      issued++;
      if (planned.clock.finished) total -= planned.count - issued;
      const { t0, t1 } = timeStep;
      const dt = t1 - t0;
      const midC = temperatureAt(st, 0.5 * (t0 + t1));
      if (held) holdSource(st, held, midC, stepper, concentration, entered);
      const budgets: ComponentDiffusivities[] = [];
      for (const s of present) budgets.push(componentBudgets(st, s, t0, t1));
      if (coupled && coupled.prepare(concentration, present, budgets, midC, previousDt > 0 ? dt / (2 * previousDt) : 0)) damped = DAMPED_STEPS;
      const scheme = timeStep.implicit || damped > 0 ? 'split-implicit' : 'douglas-gunn';
      if (damped > 0) damped--;
      for (let n = 0; n < present.length; n++) {
        const s = present[n];
        const nu = budgets[n];
        if (coupled && coupled.isVariable(s)) {
          entered[s.name] += stepper.stepVariable(concentration[s.name], coupled.nodeBudgets(s, nu), scheme, s === held);
        } else {
          entered[s.name] += stepper.step(concentration[s.name], nu.neutral + nu.single + nu.double, scheme, s === held);
        }
      }
      previousDt = dt;
      done++;
      for (const s of present) {
        if (!stepper.bottomPlaneFinite(concentration[s.name])) {
          throw new SolverError(`the ${s.name} field stopped being finite in steps[${st.index}] at ${t1.toPrecision(4)} s`);
        }
      }
      options.onProgress?.({ done, total, step: st.index, seconds: t1 });
      if (options.shouldStop?.()) throw new StoppedError();
    }
    // TED and OED are not applied in 3D yet: no enhancement to record.
    stepRecords.push({ index: st.index, kind: st.kind, timeSteps: issued, seconds: st.seconds, enhancement: {} });
  }
  const ledger: Record<string, LedgerEntry> = {};
  const area = openArea3d(mesh, mask);
  for (const s of species) {
    const inSilicon = stepper.content(concentration[s.name]);
    ledger[s.name] = {
      enteredCm2: doseFromConcentrationUm(entered[s.name] / area),
      inSiliconCm2: doseFromConcentrationUm(inSilicon / area),
      relativeImbalance: inSilicon > 0 ? Math.abs(entered[s.name] - inSilicon) / inSilicon : 0,
    };
  }
  return { plan, concentration, active: activeParts(plan, concentration), ledger, stepRecords };
}

/** The finest spacing along any axis, µm. */
export function finest3d(mesh: Mesh3d): number {
  let h = Infinity;
  for (const v of mesh.dx) h = Math.min(h, v);
  for (const v of mesh.dy) h = Math.min(h, v);
  for (let k = 1; k < mesh.nz; k++) h = Math.min(h, mesh.z[k] - mesh.z[k - 1]);
  return h;
}

/** A film's dose in the surface control volume of every open cell; returns the atoms placed (cm^-3·µm³). */
function placeFilm(c: Float64Array, mesh: Mesh3d, open: Uint8Array, doseCm2: number): number {
  const value = concentrationFromDose(doseCm2, mesh.dzVolume[0]);
  let placed = 0;
  for (let j = 0; j < mesh.ny; j++) {
    for (let i = 0; i < mesh.nx; i++) {
      const p = j * mesh.nx + i;
      if (open[p] !== 1) continue;
      c[p] += value;
      placed += value * mesh.dx[i] * mesh.dy[j] * mesh.dzVolume[0];
    }
  }
  return placed;
}

/**
 * An implant through the rectangles (implant.ts's model in 3D): the depth Gaussian times, for
 * each rectangle, the product of its x and y window profiles smeared by the lateral straggle
 * (the union of non-overlapping rectangles is the sum of their indicators, and the smearing
 * is separable). Each cell gets its mean over the cell; the walls of the solved part are
 * mirrors, so each rectangle implants its mirror images too. Returns the atoms placed.
 */
export function addImplant3d(c: Float64Array, space: Space3d, spec: ImplantSpec): number {
  const { mesh, mask } = space;
  const { nx, ny, nz, xFaces, yFaces, z, dx, dy, dzVolume, widthUm: w, lengthUm: l, depthUm } = mesh;
  const s = Math.SQRT2 * spec.lateralStraggleUm;
  const lateral = new Float64Array(nx * ny);
  const fx = new Float64Array(nx);
  const fy = new Float64Array(ny);
  for (const r of mask.rectangles) {
    for (const [x0, x1] of images(r[0], r[2], w)) {
      for (let i = 0; i < nx; i++) fx[i] = windowMean(xFaces[i], xFaces[i + 1], x0, x1, s);
      for (const [y0, y1] of images(r[1], r[3], l)) {
        for (let j = 0; j < ny; j++) fy[j] = windowMean(yFaces[j], yFaces[j + 1], y0, y1, s);
        for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) lateral[j * nx + i] += fx[i] * fy[j];
      }
    }
  }
  const sz = Math.SQRT2 * spec.straggleUm;
  const rp = spec.projectedRangeUm;
  const cdf = (zz: number) => 0.5 * erf((zz - rp) / sz);
  const inSilicon = cdf(depthUm) - cdf(0);
  const plane = nx * ny;
  let placed = 0;
  for (let k = 0; k < nz; k++) {
    const lo = k === 0 ? 0 : 0.5 * (z[k - 1] + z[k]);
    const hi = k === nz - 1 ? depthUm : 0.5 * (z[k] + z[k + 1]);
    const peak = (spec.doseCm2 * (cdf(hi) - cdf(lo))) / inSilicon / (dzVolume[k] * UM_TO_CM);
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const v = peak * lateral[j * nx + i];
        c[k * plane + j * nx + i] += v;
        placed += v * dx[i] * dy[j] * dzVolume[k];
      }
    }
  }
  return placed;
}

/** [a, b] and its mirror images in the walls at 0 and L. */
function images(a: number, b: number, length: number): [number, number][] {
  return [[a, b], [-b, -a], [2 * length - b, 2 * length - a]];
}
