import type { Report } from '../../packages/solver2d/src/index.ts';
import { describe, expect, it } from 'vitest';
import { parameterText } from '../../packages/viewer/src/caption.ts';
import { reachDimensions } from '../../packages/viewer/src/dimensions.ts';
import { deepestJunctionUm, EDGE_DEPTH_XJ, EDGE_HALF_WIDTH_XJ, edgePanes, maskEdges, tileFrames } from '../../packages/viewer/src/edge-view.ts';

/** The parts of a report the edge view reads (the rest of the contract does not matter here). */
function report(windows: [number, number, number | null][], extra: Record<string, unknown>[] = []): Report {
  return {
    windows: windows.map(([x0Um, x1Um, junctionDepthUm], k) => ({ x0Um, x1Um, junctionDepthUm, lateralLeftUm: 0.5, lateralRightUm: 0.6, ...extra[k] })),
    steps: [{ kind: 'predeposition' }, { kind: 'drive-in' }],
  } as unknown as Report;
}

describe('edge view', () => {
  it('finds the mask edges, leaving out window edges at the side walls', () => {
    expect(maskEdges(report([[0, 4, 1], [10, 12, 1], [20, 24, 1]]), 24)).toEqual([4, 10, 12, 20]);
  });

  it('puts a pane either side of each edge, clipped to the section, and joins panes that overlap or nearly touch', () => {
    // Half-width 1 µm: edges 3 and 9 give two panes; 12 and 12.2 overlap; the panes of 12 and
    // 14.2 are 0.2 µm apart (under a quarter of the half-width), those of 12 and 14.4 0.4 µm.
    expect(edgePanes([3, 9], 1, 24)).toEqual([{ x0Um: 2, x1Um: 4 }, { x0Um: 8, x1Um: 10 }]);
    expect(edgePanes([12, 12.2], 1, 24)).toEqual([{ x0Um: 11, x1Um: 13.2 }]);
    expect(edgePanes([12, 14.2], 1, 24)).toEqual([{ x0Um: 11, x1Um: 15.2 }]);
    expect(edgePanes([12, 14.4], 1, 24)).toHaveLength(2);
    expect(edgePanes([0.5, 23.8], 1, 24)).toEqual([{ x0Um: 0, x1Um: 1.5 }, { x0Um: 22.8, x1Um: 24 }]);
  });

  it('shows the edge view only where the section is much wider than deep, sized by the deepest junction', () => {
    const wide = { report: report([[8, 16, 1.8]]), widthUm: 24, depthUm: 3.2 };
    const narrow = { report: report([[8, 16, 1.8]]), widthUm: 24, depthUm: 10 };
    const f = tileFrames([wide], true);
    expect(f.edges).toBe(true);
    const a = EDGE_HALF_WIDTH_XJ * 1.8;
    expect(f.frames[0].panes).toEqual([{ x0Um: 8 - a, x1Um: 8 + a }, { x0Um: 16 - a, x1Um: 16 + a }]);
    expect(f.frames[0].depthUm).toBeCloseTo(Math.min(3.2, EDGE_DEPTH_XJ * 1.8), 12);
    // Full width asked for, or a section not much wider than deep: the whole width.
    expect(tileFrames([wide], false).frames[0].panes).toEqual([{ x0Um: 0, x1Um: 24 }]);
    expect(tileFrames([narrow], true).edges).toBe(false);
    // No junction to size the panes by: the whole width.
    expect(tileFrames([{ ...wide, report: report([[8, 16, null]]) }], true).edges).toBe(false);
  });
});

describe('edge view of a buried layer', () => {
  it('is sized by the lower junction and the reach depth, not only the upper junction at the centre', () => {
    // A buried implant: junctions at 0.13 and 0.67 µm, reaching 0.18 µm beyond the edge at 0.4 µm.
    const r = report([[3, 5, 0.13]], [{ junctionDepthsUm: [0.13, 0.67], lateralReachLeftUm: 0.18, lateralReachDepthLeftUm: 0.4 }]);
    expect(deepestJunctionUm([{ report: r, widthUm: 8, depthUm: 0.84 }])).toBe(0.67);
  });
});

describe('reach dimensions', () => {
  it('use the reach at any depth where the report has it, else the surface lateral, and skip edges at a wall', () => {
    const r = report([[0, 4, 1], [10, 12, 1]], [{}, { lateralReachLeftUm: 0.7, lateralReachDepthLeftUm: 0.2, lateralReachRightUm: 0.65, lateralReachDepthRightUm: 0 }]);
    const d = reachDimensions(r, 24);
    expect(d.map((x) => [x.windowIndex, x.side, x.edgeUm, x.reachUm, x.depthUm, x.atAnyDepth])).toEqual([
      [0, 'right', 4, 0.6, 0, false],
      [1, 'left', 10, 0.7, 0.2, true],
      [1, 'right', 12, 0.65, 0, true],
    ]);
  });
});

describe('caption words', () => {
  it('names swept parameters in words with their units', () => {
    const r = report([[8, 16, 1]]);
    expect(parameterText('windowWidthUm', 0.5, r)).toBe('window width 0.5 µm');
    expect(parameterText('steps[1].minutes', 60, r)).toBe('step 2 (drive-in) time 60 min');
    expect(parameterText('steps[0].temperatureC', 950, r)).toBe('step 1 (predeposition) temperature 950 °C');
    expect(parameterText('substrate.concentrationCm3', 1e15, r)).toBe('substrate concentration 1e15 cm⁻³');
  });
});
