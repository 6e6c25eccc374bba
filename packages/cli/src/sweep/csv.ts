import type { RectangleReport, Report, WindowReport } from '@edgewise/solver2d';

/**
 * sweep.csv: one row per run — id, the swept values, then per window every number of the
 * report's window (junction depth, lateral encroachment and lateral reach with its depth at
 * each edge, lateral/xj, surface concentration, sheet and line resistance, effective width,
 * drawn width plus lateral, edge radii), each measured one followed by its numerical error bar
 * (empty without error solves), then the electrical numbers where the recipe has them (below),
 * then the run's status and error.
 * Quoting follows RFC 4180 (fields with a comma, quote or line break are quoted, quotes doubled).
 */
type Measured =
  | 'junctionDepthUm' | 'lateralLeftUm' | 'lateralRightUm'
  | 'lateralReachLeftUm' | 'lateralReachDepthLeftUm' | 'lateralReachRightUm' | 'lateralReachDepthRightUm'
  | 'surfaceConcentrationCm3' | 'sheetResistanceOhmSq' | 'lineResistanceOhmPerUm' | 'effectiveWidthUm'
  | 'drawnPlusLateralUm' | 'curvatureRadiusLeftUm' | 'curvatureRadiusRightUm';
type Plain = 'lateralToVerticalRatio';

/** The report fields, in column order; each measured one gets an error column after it. */
const FIELDS: readonly (Measured | Plain)[] = [
  'junctionDepthUm', 'lateralLeftUm', 'lateralRightUm',
  'lateralReachLeftUm', 'lateralReachDepthLeftUm', 'lateralReachRightUm', 'lateralReachDepthRightUm',
  'lateralToVerticalRatio', 'surfaceConcentrationCm3',
  'sheetResistanceOhmSq', 'lineResistanceOhmPerUm', 'effectiveWidthUm', 'drawnPlusLateralUm',
  'curvatureRadiusLeftUm', 'curvatureRadiusRightUm',
];
const PLAIN: ReadonlySet<string> = new Set<Plain>(['lateralToVerticalRatio']);
/** The unit suffixes of the field names; an error column puts "Error" before the unit (junctionDepthErrorUm, sheetResistanceErrorOhmSq). */
const UNIT = /(Um|OhmSq|OhmPerUm|Cm3)$/;

/** Each column: its name and the report field it holds (an error bar when `error` is set). */
const COLUMNS: readonly { name: string; field: Measured | Plain; error?: true }[] = FIELDS.flatMap((field) =>
  PLAIN.has(field) ? [{ name: field, field }] : [{ name: field, field }, { name: field.replace(UNIT, 'Error$1'), field, error: true as const }]);

export const WINDOW_COLUMNS = COLUMNS.map((c) => c.name);

/**
 * A 3D sweep (mask.rectangles) has per rectangle the junction depth and the reach at each
 * edge's middle and each corner, each with its error bar.
 */
const REACHES = [
  ['edgeLeftUm', (r: RectangleReport) => r.edgeReachUm.left, (e: Errors) => e?.edgeReachUm.left],
  ['edgeRightUm', (r: RectangleReport) => r.edgeReachUm.right, (e: Errors) => e?.edgeReachUm.right],
  ['edgeBottomUm', (r: RectangleReport) => r.edgeReachUm.bottom, (e: Errors) => e?.edgeReachUm.bottom],
  ['edgeTopUm', (r: RectangleReport) => r.edgeReachUm.top, (e: Errors) => e?.edgeReachUm.top],
  ['cornerBottomLeftUm', (r: RectangleReport) => r.cornerReachUm.bottomLeft, (e: Errors) => e?.cornerReachUm.bottomLeft],
  ['cornerBottomRightUm', (r: RectangleReport) => r.cornerReachUm.bottomRight, (e: Errors) => e?.cornerReachUm.bottomRight],
  ['cornerTopLeftUm', (r: RectangleReport) => r.cornerReachUm.topLeft, (e: Errors) => e?.cornerReachUm.topLeft],
  ['cornerTopRightUm', (r: RectangleReport) => r.cornerReachUm.topRight, (e: Errors) => e?.cornerReachUm.topRight],
] as const;
type Errors = RectangleReport['errors'];

const RECTANGLE_COLUMNS: readonly { name: string; field: string; error?: true }[] = [
  { name: 'junctionDepthUm', field: 'junctionDepthUm' },
  { name: 'junctionDepthErrorUm', field: 'junctionDepthUm', error: true },
  ...REACHES.flatMap(([name]) => [{ name, field: name }, { name: name.replace(/Um$/, 'ErrorUm'), field: name, error: true as const }]),
];

/** One window's (2D) or one rectangle's (3D) results, by column field. */
export type WindowResult = Partial<Record<string, number | null>> & {
  errors?: Partial<Record<string, number | null>>;
  /** text results (breakdownLimitedBy) */
  text?: Partial<Record<string, string | null>>;
};

/**
 * With `electrical` in the recipe each window's group goes on with its breakdown (each with its
 * error bar), what limits it, then per bias the peak field, the depletion depth and lateral
 * reach and the area and perimeter capacitance, each with its error bar. A per-bias column ends
 * in `@` and the bias's label (`peakFieldVPerCm@5V`; `@bias1`, … where the runs' biases differ).
 * In a window's results the per-bias values sit under `field@k`, k the bias's position.
 */
const ELECTRICAL_SINGLE = ['breakdownV', 'breakdownPlaneV'] as const;
const ELECTRICAL_PER_BIAS = ['peakFieldVPerCm', 'depletionDepthUm', 'depletionLateralUm', 'areaCapacitanceFPerCm2', 'perimeterCapacitanceFPerCm'] as const;
/** The unit suffixes of the electrical fields, for their error columns (breakdownErrorV, peakFieldErrorVPerCm). */
const ELECTRICAL_UNIT = /(VPerCm|FPerCm2|FPerCm|Um|V)$/;

interface Column { name: string; field: string; error?: true; text?: true }

function electricalColumns(biases: readonly string[]): Column[] {
  const pair = (name: string, field: string) => [{ name, field }, { name: name.replace(ELECTRICAL_UNIT, 'Error$1'), field, error: true as const }];
  return [
    ...ELECTRICAL_SINGLE.flatMap((f) => pair(f, f)),
    { name: 'breakdownLimitedBy', field: 'breakdownLimitedBy', text: true },
    ...biases.flatMap((label, b) => ELECTRICAL_PER_BIAS.flatMap((f) => pair(f, `${f}@${b}`).map((c) => ({ ...c, name: `${c.name}@${label}` })))),
  ];
}

/** A report's electrical numbers of window k as results keyed as the columns' fields. */
function electricalResults(report: Report, k: number): WindowResult {
  const w = report.electrical?.windows[k];
  const out: WindowResult = {};
  out.errors = {};
  if (!w) return out;
  out.breakdownV = w.breakdownV;
  out.breakdownPlaneV = w.breakdownPlaneV;
  out.text = { breakdownLimitedBy: w.breakdownLimitedBy };
  const errors: Partial<Record<string, number | null>> = { breakdownV: w.errors?.breakdownV ?? null, breakdownPlaneV: w.errors?.breakdownPlaneV ?? null };
  for (const f of ELECTRICAL_PER_BIAS) {
    w[f].forEach((v, b) => {
      out[`${f}@${b}`] = v;
      errors[`${f}@${b}`] = w.errors?.[f]?.[b] ?? null;
    });
  }
  out.errors = errors;
  return out;
}

/** The labels of the per-bias columns: each bias in V where every run has the same list, else the positions. */
export function biasLabels(lists: readonly (readonly number[])[]): string[] {
  const [first] = lists;
  const same = lists.every((l) => l.length === first.length && l.every((v, b) => v === first[b]));
  const distinct = new Set(first).size === first.length;
  return first.map((v, b) => (same && distinct ? `${v}V` : `bias${b + 1}`));
}

/** A 3D report's rectangles as rows of results. */
export function rectangleResults(report: Report): WindowResult[] {
  return (report.rectangles ?? []).map((r) => {
    const out: WindowResult = { junctionDepthUm: r.junctionDepthUm };
    const errors: Partial<Record<string, number | null>> = { junctionDepthUm: r.errors?.junctionDepthUm ?? null };
    for (const [name, value, error] of REACHES) {
      out[name] = value(r);
      errors[name] = error(r.errors) ?? null;
    }
    out.errors = errors;
    return out;
  });
}

/** The results a report gives a sweep's rows: its windows, or its rectangles in 3D. */
export function reportResults(report: Report): WindowResult[] {
  if (report.rectangles) return rectangleResults(report);
  const windows = (report.windows as WindowReport[]) as unknown as WindowResult[];
  if (!report.electrical) return windows;
  return windows.map((w, k) => {
    const e = electricalResults(report, k);
    const merged: WindowResult = { ...w, ...e };
    merged.errors = { ...w.errors, ...e.errors };
    return merged;
  });
}

export type RunStatus = 'ok' | 'failed' | 'abandoned' | 'pending';

export interface RunRow {
  id: number;
  values: Record<string, number>;
  /** the report's windows, when the run finished */
  windows: WindowResult[] | null;
  status: RunStatus;
  error: string | null;
}

function columnsOf(rectangles: boolean, biases: readonly string[] | undefined): readonly Column[] {
  if (rectangles) return RECTANGLE_COLUMNS;
  return biases ? [...COLUMNS, ...electricalColumns(biases)] : COLUMNS;
}

export function csvHeader(parameters: readonly string[], windows: number, rectangles = false, biases?: readonly string[]): string[] {
  const names = columnsOf(rectangles, biases).map((c) => c.name);
  const prefix = rectangles ? 'r' : 'w';
  const metrics = windows === 1
    ? [...names]
    : Array.from({ length: windows }, (_, k) => names.map((c) => `${prefix}${k + 1}.${c}`)).flat();
  return ['id', ...parameters, ...metrics, 'status', 'error'];
}

/** Shortest text that reads back as the same number; exponent form for large and small magnitudes. */
export function numberCell(v: number | null | undefined): string {
  if (v === null || v === undefined) return '';
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e6 || a < 1e-4) ? v.toExponential().replace('e+', 'e') : String(v);
}

export function csvRow(row: RunRow, parameters: readonly string[], windows: number, rectangles = false, biases?: readonly string[]): string[] {
  const metrics: string[] = [];
  const columns = columnsOf(rectangles, biases);
  for (let k = 0; k < windows; k++) {
    const w = row.windows?.[k];
    for (const c of columns) metrics.push(c.text ? w?.text?.[c.field] ?? '' : numberCell(c.error ? w?.errors?.[c.field] : w?.[c.field]));
  }
  return [String(row.id), ...parameters.map((p) => numberCell(row.values[p])), ...metrics, row.status, row.error ?? ''];
}

function quote(field: string): string {
  return /[",\r\n]/.test(field) ? `"${field.replace(/"/g, '""')}"` : field;
}

export function encodeCsv(rows: readonly (readonly string[])[]): string {
  return rows.map((r) => r.map(quote).join(',')).join('\n') + '\n';
}

/** Parses RFC 4180 text into rows of fields; throws on an unterminated quote. */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  let k = 0;
  while (k < text.length) {
    const ch = text[k];
    if (quoted) {
      if (ch === '"' && text[k + 1] === '"') { field += '"'; k += 2; continue; }
      if (ch === '"') { quoted = false; k++; continue; }
      field += ch;
      k++;
      continue;
    }
    if (ch === '"' && field === '') { quoted = true; k++; continue; }
    if (ch === ',') { row.push(field); field = ''; k++; continue; }
    if (ch === '\n' || ch === '\r') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      k += ch === '\r' && text[k + 1] === '\n' ? 2 : 1;
      continue;
    }
    field += ch;
    k++;
  }
  if (quoted) throw new Error('unterminated quoted field');
  if (field !== '' || row.length > 0) {
    row.push(field);
    rows.push(row);
  }
  return rows;
}
