import { describe, expect, it } from 'vitest';
import { predepositionRecipe } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

// A long diffused line of drawn width W: its resistance per unit length tends to Rs/W as the
// line gets wide, the edges' share of the current falling as 1/W (definition of sheet
// resistance; common practice for resistor layout). A constant-source diffusion, on a mesh
// half the default density: the check compares two widths on the same kind of mesh.
const line = (width: number) => {
  const margin = 6;
  const run = solve(predepositionRecipe({
    widthUm: width + 2 * margin, windows: [[margin, margin + width]], cs: 1e20, background: 1e16,
    temperatureC: 1100, minutes: 30, mesh: { refine: 0.5 },
  }));
  return run.report.windows[0];
};

describe('line resistance of a diffused line', () => {
  const narrow = line(5);
  const wide = line(40);
  const signed = (w: typeof wide, width: number) => (w.lineResistanceOhmPerUm! * width) / w.sheetResistanceOhmSq! - 1;
  const deviation = (w: typeof wide, width: number) => Math.abs(signed(w, width));

  it('a 40 µm line is within 1 % of Rs/W, and the deviation shrinks about as 1/W', () => {
    console.log(`R'·W/Rs − 1: ${signed(narrow, 5).toExponential(2)} at 5 µm, ${signed(wide, 40).toExponential(2)} at 40 µm`);
    expect(deviation(wide, 40)).toBeLessThan(0.01);
    // 1/W scaling: 8× the width, about ⅛ the deviation (between ¼ and 1/16 allowed).
    expect(deviation(wide, 40)).toBeLessThan(deviation(narrow, 5) / 4);
    expect(deviation(wide, 40)).toBeGreaterThan(deviation(narrow, 5) / 16);
  });

  it('the electrical width exceeds the drawn width by the same amount for both lines (edges, not width, set it)', () => {
    const extraNarrow = narrow.effectiveWidthUm! - 5;
    const extraWide = wide.effectiveWidthUm! - 40;
    console.log(`W eff − W: ${extraNarrow.toFixed(4)} µm at 5 µm, ${extraWide.toFixed(4)} µm at 40 µm; 2 × lateral ${(2 * wide.lateralLeftUm!).toFixed(4)} µm`);
    expect(extraNarrow).toBeGreaterThan(0);
    expect(Math.abs(extraWide - extraNarrow)).toBeLessThan(0.01 * extraWide);
    // Less than the metallurgical width: the layer under the mask is lightly doped.
    expect(extraWide).toBeLessThan(wide.lateralLeftUm! + wide.lateralRightUm!);
  });
});
