import type { RectangleReport, Report } from '@edgewise/solver2d';
import {
  cornerCut, cornerWords, cutAxisName, cutTitle, defaultCuts, distanceAlong, planSection, reachMarks, rectanglesOf,
  sampleCut, sectionContours, windowsAlong, type CornerName, type Cut, type CutLine, type SectionInfo, type Volume,
} from './cuts3d.ts';
import type { RunData } from './load.ts';

/**
 * A 3D run shown as tiles: the plan view at the surface and cuts through the field along x,
 * along y and along a corner's diagonal. Each is handed to the tiles as a 2D run, with a
 * report made for it (its width, the stretches of window along it and the report's reaches
 * where it crosses them, its junction contours), and its `section` saying what it is.
 */

/** Which cuts to show; null takes each run's default (through its first rectangle, its first convex corner). */
export interface CutChoice {
  /** the cut along x, at this y, µm */
  xCutAtYUm: number | null;
  /** the cut along y, at this x, µm */
  yCutAtXUm: number | null;
  corner: { rectangle: number; corner: CornerName } | null;
}

export const DEFAULT_CHOICE: CutChoice = { xCutAtYUm: null, yCutAtXUm: null, corner: null };

export function isVolumeRun(run: RunData): boolean {
  return run.y !== undefined && (run.report.rectangles?.length ?? 0) > 0;
}

function volumeOf(run: RunData): Volume {
  const cs = run.report.crossSection;
  return { x: run.x, y: run.y!, z: run.z, field: run.field, layers: run.layers.length, widthUm: cs.widthUm, lengthUm: cs.lengthUm ?? cs.widthUm };
}

function fmt(v: number | null | undefined, error?: number | null): string {
  if (typeof v !== 'number') return '—';
  return typeof error === 'number' ? `${v.toFixed(3)} ± ${error >= 0.001 ? error.toFixed(3) : error.toPrecision(1)}` : v.toFixed(3);
}

/** A window stretch of a section as the tiles read a report's window. */
function sectionWindow(x0Um: number, x1Um: number, junctionDepthUm: number | null, left: number | null, right: number | null) {
  return { x0Um, x1Um, centreUm: 0.5 * (x0Um + x1Um), junctionDepthUm, junctionDepthsUm: [], lateralLeftUm: left, lateralRightUm: right };
}

const near = (a: number, b: number) => Math.abs(a - b) < 1e-6 * Math.max(1, Math.abs(a), Math.abs(b));

/**
 * The report's reach at each end of each stretch of window along a cut, where the cut crosses
 * an edge at its middle (x and y cuts) or passes the cut's corner (the diagonal); null elsewhere.
 */
function reachesAlong(cut: Cut, line: CutLine, rects: RectangleReport[], span: [number, number]): [number | null, number | null] {
  const ends: [number | null, number | null] = [null, null];
  if (cut.kind === 'diagonal') {
    const reach = rects[cut.rectangle]?.cornerReachUm[cut.corner] ?? null;
    const sc = distanceAlong(line, cut.xUm, cut.yUm);
    // The outward diagonal points to smaller s where dx < 0: the window begins at the corner.
    if (cut.dx < 0 && near(span[0], sc)) ends[0] = reach;
    if (cut.dx > 0 && near(span[1], sc)) ends[1] = reach;
    return ends;
  }
  for (const r of rects) {
    const along = cut.kind === 'x' ? [r.x0Um, r.x1Um, r.edgeReachUm.left, r.edgeReachUm.right] : [r.y0Um, r.y1Um, r.edgeReachUm.bottom, r.edgeReachUm.top];
    const middle = cut.kind === 'x' ? 0.5 * (r.y0Um + r.y1Um) : 0.5 * (r.x0Um + r.x1Um);
    const at = cut.kind === 'x' ? cut.yUm : cut.xUm;
    if (!near(middle, at)) continue;
    if (near(span[0], along[0]!)) ends[0] = along[2];
    if (near(span[1], along[1]!)) ends[1] = along[3];
  }
  return ends;
}

/** Caption lines of a cut: the report's numbers it shows. */
function cutLines(cut: Cut, report: Report, windows: ReturnType<typeof sectionWindow>[]): string[] {
  const rects = report.rectangles ?? [];
  if (cut.kind === 'diagonal') {
    const r = rects[cut.rectangle];
    const kind = r?.cornerKind[cut.corner] ?? '';
    const ratio = r?.cornerToEdgeRatio[cut.corner];
    return [
      `corner reach ${fmt(r?.cornerReachUm[cut.corner], r?.errors?.cornerReachUm[cut.corner])} µm (${kind} corner)`,
      ...(typeof ratio === 'number' ? [`${ratio.toFixed(3)} × the rectangle's mean edge reach`] : []),
    ];
  }
  const reaches = windows.flatMap((w) => [w.lateralLeftUm, w.lateralRightUm]).filter((v): v is number => v !== null);
  const through = reaches.length > 0 ? `edge reach at the edges' middles ${reaches.map((v) => v.toFixed(3)).join(' | ')} µm` : 'off the rectangles\' middles (where the report measures the edge reach)';
  const depth = rects.find((r) => (cut.kind === 'x' ? r.y0Um < cut.yUm && cut.yUm < r.y1Um : r.x0Um < cut.xUm && cut.xUm < r.x1Um));
  return [through, ...(depth ? [`xj at the rectangle's centre ${fmt(depth.junctionDepthUm, depth.errors?.junctionDepthUm)} µm`] : [])];
}

function cutRun(run: RunData, volume: Volume, cut: Cut): RunData {
  const report = run.report;
  const section = sampleCut(volume, cut);
  const rects = report.rectangles ?? [];
  const xj = Math.max(0, ...rects.map((r) => r.junctionDepthUm ?? 0)) || null;
  const windows = windowsAlong(section.line, rectanglesOf(report)).map((span) => {
    const [left, right] = reachesAlong(cut, section.line, rects, span);
    return sectionWindow(span[0], span[1], xj, left, right);
  });
  const info: SectionInfo = {
    kind: cut.kind, title: cutTitle(cut), lines: cutLines(cut, report, windows),
    across: cutAxisName(cut), down: 'depth, µm', downFromUm: null, line: section.line, rectangles: [], marks: [],
  };
  const sectionReport = {
    ...report,
    crossSection: { ...report.crossSection, widthUm: section.lengthUm },
    windows,
    junctions: [{ polylinesUm: sectionContours(section) }],
  } as unknown as Report;
  return { id: `${run.id}/cut-${cut.kind}`, dir: run.dir, values: run.values, report: sectionReport, x: section.s, z: section.z, field: section.field, layers: run.layers, section: info };
}

function planLines(report: Report): string[] {
  return (report.rectangles ?? []).slice(0, 2).map((r, k) => {
    const edges = Object.values(r.edgeReachUm).filter((v): v is number => v !== null);
    const corners = Object.values(r.cornerReachUm).filter((v): v is number => v !== null);
    const range = (v: number[]) => (v.length === 0 ? '—' : Math.min(...v) === Math.max(...v) ? v[0].toFixed(3) : `${Math.min(...v).toFixed(3)}–${Math.max(...v).toFixed(3)}`);
    return `rectangle ${k + 1}: xj ${fmt(r.junctionDepthUm)} µm, edge reach ${range(edges)} µm, corner reach ${range(corners)} µm`;
  });
}

function planRun(run: RunData, volume: Volume): RunData {
  const report = run.report;
  const plan = planSection(volume);
  const L = volume.lengthUm;
  const info: SectionInfo = {
    kind: 'plan', title: 'plan view at the surface', lines: planLines(report), across: 'x, µm', down: 'y, µm', downFromUm: L,
    line: null, rectangles: rectanglesOf(report), marks: reachMarks(report),
  };
  const outlines = (report.plan?.outlines ?? []).map((o) => ({ polylinesUm: o.polylinesUm.map((line) => line.map(([x, y]) => [x, L - y])) }));
  const sectionReport = {
    ...report,
    crossSection: { ...report.crossSection, widthUm: volume.widthUm },
    // One stretch the whole width: the tile draws no mask band above the plan view (the
    // rectangles are drawn on it instead) and finds no mask edge in it.
    windows: [sectionWindow(0, volume.widthUm, null, null, null)],
    junctions: outlines,
  } as unknown as Report;
  return { id: `${run.id}/plan`, dir: run.dir, values: run.values, report: sectionReport, x: plan.s, z: plan.z, field: plan.field, layers: run.layers, section: info };
}

/** The cuts of a run for a choice: each given value, else the run's default. */
export function chosenCuts(report: Report, choice: CutChoice): Cut[] {
  const defaults = defaultCuts(report);
  const cuts: Cut[] = [];
  for (const d of defaults) {
    if (d.kind === 'x') cuts.push(choice.xCutAtYUm === null ? d : { kind: 'x', yUm: choice.xCutAtYUm });
    else if (d.kind === 'y') cuts.push(choice.yCutAtXUm === null ? d : { kind: 'y', xUm: choice.yCutAtXUm });
    else cuts.push((choice.corner && cornerCut(report, choice.corner.rectangle, choice.corner.corner)) || d);
  }
  return cuts;
}

/** The tiles' runs: a 3D run becomes its plan view and its cuts; a 2D run stays as it is. */
export function sectionRuns(runs: readonly RunData[], choice: CutChoice = DEFAULT_CHOICE): RunData[] {
  return runs.flatMap((run) => {
    if (!isVolumeRun(run)) return [run];
    const volume = volumeOf(run);
    return [planRun(run, volume), ...chosenCuts(run.report, choice).map((cut) => cutRun(run, volume, cut))];
  });
}

/** The depth stretch to draw with: the panel's, except that sections of 3D runs are always drawn true to shape. */
export function trueShape(tiles: readonly { run: RunData }[], stretch: number): number {
  return tiles.some((t) => t.run.section) ? 1 : stretch;
}

/** A corner as a choice's label: "rectangle 1, bottom-left (convex)". */
export function cornerLabel(rectangle: number, corner: CornerName, kind: string): string {
  return `rectangle ${rectangle + 1}, ${cornerWords(corner)} (${kind})`;
}
