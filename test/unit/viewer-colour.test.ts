import { describe, expect, it } from 'vitest';
import {
  colourMapLab, colourMapRgba, deltaE76, labToSrgb, luminance, srgbToLab,
} from '../../packages/viewer/src/colormap.ts';
import {
  decadeTicks, defaultRange, formatConcentration, log10Magnitude, scalePosition,
} from '../../packages/viewer/src/colour-scale.ts';

describe('CIELAB conversion', () => {
  it('puts the D65 white at L* = 100, a* = b* = 0 (CIE 1976 definition)', () => {
    const [L, a, b] = srgbToLab([1, 1, 1]);
    expect(L).toBeCloseTo(100, 3);
    expect(a).toBeCloseTo(0, 2);
    expect(b).toBeCloseTo(0, 2);
  });

  it('maps sRGB red to L* 53.24, a* 80.09, b* 67.20 (tabulated sRGB/D65 value, from memory)', () => {
    const [L, a, b] = srgbToLab([1, 0, 0]);
    expect(L).toBeCloseTo(53.24, 1);
    expect(a).toBeCloseTo(80.09, 1);
    expect(b).toBeCloseTo(67.2, 1);
  });

  it('round-trips sRGB → Lab → sRGB to 1e-6 (the two matrices are inverses, IEC 61966-2-1)', () => {
    for (const rgb of [[0.1, 0.5, 0.9], [0.8, 0.2, 0.3], [0.02, 0.02, 0.02]] as const) {
      const back = labToSrgb(srgbToLab([...rgb]));
      for (let c = 0; c < 3; c++) expect(back[c]).toBeCloseTo(rgb[c], 5);
    }
  });
});

describe('colour map', () => {
  const lab = colourMapLab(256);
  const rgba = colourMapRgba(256);
  const rgb = (k: number): [number, number, number] => [rgba[4 * k] / 255, rgba[4 * k + 1] / 255, rgba[4 * k + 2] / 255];

  it('rises in lightness L* at every step, so it reads in grey (Kovesi 2015: monotonic lightness)', () => {
    for (let k = 1; k < lab.length; k++) expect(lab[k][0]).toBeGreaterThan(lab[k - 1][0]);
    expect(lab[255][0] - lab[0][0]).toBeGreaterThan(70); // common practice: most of the L* range for contrast
  });

  it('has equal perceptual steps: CIELAB ΔE between neighbours within 2 % of their mean (Kovesi 2015: uniform ΔE)', () => {
    const steps = lab.slice(1).map((p, k) => deltaE76(lab[k], p));
    const mean = steps.reduce((a, b) => a + b, 0) / steps.length;
    for (const s of steps) expect(Math.abs(s - mean) / mean).toBeLessThan(0.02);
  });

  it('stays inside the sRGB gamut before rounding to bytes', () => {
    for (const p of lab) for (const c of labToSrgb(p)) expect(c).toBeGreaterThanOrEqual(-1e-6), expect(c).toBeLessThanOrEqual(1 + 1e-6);
  });

  it('keeps the order after a grey conversion: the bytes\' luminance Y rises (Rec. 709 weights)', () => {
    for (let k = 1; k < 256; k++) expect(luminance(rgb(k))).toBeGreaterThanOrEqual(luminance(rgb(k - 1)));
    expect(luminance(rgb(255)) / luminance(rgb(0))).toBeGreaterThan(20); // common practice: a wide contrast ratio
  });

  it('changes hue along the way (not a grey ramp): chroma above 25 in the middle', () => {
    const [, a, b] = lab[128];
    expect(Math.hypot(a, b)).toBeGreaterThan(25);
  });
});

describe('colour scale', () => {
  const range = { lo: 14, hi: 20 };

  it('places a concentration at (log10 C − lo)/(hi − lo) (definition of a log scale)', () => {
    expect(scalePosition(1e17, range)).toBeCloseTo(0.5, 12);
    expect(scalePosition(-1e17, range)).toBeCloseTo(0.5, 12); // net doping: its magnitude
    expect(scalePosition(10 ** 15.5, range)).toBeCloseTo(1.5 / 6, 12);
  });

  it('clamps outside the range and floors zero at 1 cm^-3', () => {
    expect(scalePosition(1e22, range)).toBe(1);
    expect(scalePosition(0, range)).toBe(0);
    expect(log10Magnitude(0)).toBe(0);
  });

  it('defaults to [a decade under the background, the peak rounded up to a decade]', () => {
    expect(defaultRange(8.2e19, 1e15)).toEqual({ lo: 14, hi: 20 });
    expect(defaultRange(3e20, 1e10)).toEqual({ lo: 13, hi: 21 }); // at most 8 decades (common practice)
  });

  it('labels every decade of the range, thinned when there are many', () => {
    expect(decadeTicks({ lo: 14, hi: 20 })).toEqual([14, 15, 16, 17, 18, 19, 20]);
    expect(decadeTicks({ lo: 14.5, hi: 16.2 })).toEqual([15, 16]);
    expect(decadeTicks({ lo: 0, hi: 22 }, 6).length).toBeLessThanOrEqual(6);
  });

  it('prints four significant figures', () => {
    expect(formatConcentration(1.23456e18)).toBe('1.235e18');
    expect(formatConcentration(-4e15)).toBe('-4.000e15');
  });
});
