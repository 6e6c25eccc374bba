import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { applyLiveFields, liveFields, WINDOW_WIDTH_PATH } from '../../packages/viewer/src/live-params.ts';
import { parseRecipe } from '../../packages/solver2d/src/index.ts';

const recipe = JSON.parse(readFileSync('examples/base-resistor.json', 'utf8'));

describe('live mode recipe fields', () => {
  const fields = liveFields(recipe);

  it('offers the window width, the substrate, and each step\'s temperature, time and source', () => {
    expect(fields.map((f) => f.path)).toEqual([
      WINDOW_WIDTH_PATH, 'substrate.concentrationCm3',
      'steps[0].temperatureC', 'steps[0].minutes', 'steps[0].surfaceConcentrationCm3',
      'steps[1].temperatureC', 'steps[1].minutes',
    ]);
    expect(fields[0].value).toBe(8); // the demo recipe's window [8, 16]
  });

  it('puts edited values back: a new width about the same centre, concentrations read from text', () => {
    const edited = fields.map((f) => ({ ...f }));
    edited[0].value = 3;
    edited[4].value = '5e19';
    edited[6].value = 120;
    const out = applyLiveFields(recipe, edited) as typeof recipe;
    expect(out.mask.windows[0]).toEqual([10.5, 13.5]); // centre 12 µm kept
    expect(out.steps[0].surfaceConcentrationCm3).toBe(5e19);
    expect(out.steps[1].minutes).toBe(120);
    expect(recipe.steps[1].minutes).toBe(60); // the original is left alone
    expect(() => parseRecipe(out)).not.toThrow();
  });

  it('leaves a value that is not a number as typed, so the recipe check names the field', () => {
    const edited = fields.map((f) => ({ ...f }));
    edited[1].value = 'lots';
    expect(() => parseRecipe(applyLiveFields(recipe, edited))).toThrow(/substrate\.concentrationCm3/);
  });
});
