/**
 * The recipe values the live mode lets one edit, as a flat list of named fields, and the
 * way back from edited fields to a recipe. Concentrations are edited as text ("1e20"):
 * a slider over fifteen decades is no use.
 */
export interface LiveField {
  /** label in the panel */
  label: string;
  /** path into the recipe, e.g. steps[1].minutes, or the window width */
  path: string;
  kind: 'number' | 'text';
  value: number | string;
}

type RecipeLike = {
  substrate?: { concentrationCm3?: unknown };
  crossSection?: { widthUm?: unknown };
  mask?: { windows?: unknown };
  steps?: unknown;
};

export const WINDOW_WIDTH_PATH = 'mask.windows[0] width';

function stepLabel(k: number, kind: string): string {
  return `${k + 1}. ${kind}`;
}

export function liveFields(recipe: unknown): LiveField[] {
  const r = recipe as RecipeLike;
  const out: LiveField[] = [];
  const windows = r.mask?.windows;
  if (Array.isArray(windows) && Array.isArray(windows[0]) && typeof windows[0][0] === 'number' && typeof windows[0][1] === 'number') {
    out.push({ label: 'window width, µm', path: WINDOW_WIDTH_PATH, kind: 'number', value: windows[0][1] - windows[0][0] });
  }
  if (typeof r.substrate?.concentrationCm3 === 'number') {
    out.push({ label: 'substrate, cm⁻³', path: 'substrate.concentrationCm3', kind: 'text', value: r.substrate.concentrationCm3.toExponential() });
  }
  if (Array.isArray(r.steps)) {
    r.steps.forEach((s: Record<string, unknown>, k) => {
      if (typeof s !== 'object' || s === null) return;
      const kind = String(s.kind ?? 'step');
      if (typeof s.temperatureC === 'number') out.push({ label: `${stepLabel(k, kind)}: °C`, path: `steps[${k}].temperatureC`, kind: 'number', value: s.temperatureC });
      if (typeof s.minutes === 'number') out.push({ label: `${stepLabel(k, kind)}: minutes`, path: `steps[${k}].minutes`, kind: 'number', value: s.minutes });
      if (typeof s.surfaceConcentrationCm3 === 'number') out.push({ label: `${stepLabel(k, kind)}: Cs, cm⁻³`, path: `steps[${k}].surfaceConcentrationCm3`, kind: 'text', value: s.surfaceConcentrationCm3.toExponential() });
      if (typeof s.doseCm2 === 'number') out.push({ label: `${stepLabel(k, kind)}: dose, cm⁻²`, path: `steps[${k}].doseCm2`, kind: 'text', value: s.doseCm2.toExponential() });
    });
  }
  return out;
}

/** Path "a.b[2].c" as keys. */
function keys(path: string): (string | number)[] {
  return path.split(/\.|(?=\[)/).map((p) => (p.startsWith('[') ? Number(p.slice(1, -1)) : p));
}

/**
 * A copy of the recipe with the fields' values put in. A text field that is not a number
 * goes in as the text, so the recipe check names the field and what it allows.
 */
export function applyLiveFields(recipe: unknown, fields: LiveField[]): unknown {
  const copy = structuredClone(recipe) as Record<string, unknown>;
  for (const f of fields) {
    const value = f.kind === 'text' && String(f.value).trim() !== '' && Number.isFinite(Number(f.value)) ? Number(f.value) : f.value;
    if (f.path === WINDOW_WIDTH_PATH) {
      // Keep the window's centre; the width is what changes.
      const w = (copy.mask as { windows: [number, number][] }).windows[0];
      const centre = 0.5 * (w[0] + w[1]);
      const width = Number(value);
      w[0] = Number((centre - width / 2).toPrecision(12));
      w[1] = Number((centre + width / 2).toPrecision(12));
      continue;
    }
    const path = keys(f.path);
    let target = copy as Record<string | number, unknown>;
    for (const k of path.slice(0, -1)) target = target[k] as Record<string | number, unknown>;
    target[path[path.length - 1]] = value;
  }
  return copy;
}
