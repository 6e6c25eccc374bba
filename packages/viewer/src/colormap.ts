/**
 * The viewer's colour map, derived here rather than copied: a path through CIELAB whose
 * lightness L* rises linearly from dark to light (so it reads in grey, and order is never
 * carried by hue alone) while the hue turns from blue-violet through red to yellow, with as
 * much chroma as the sRGB gamut allows at each lightness (a little less, to keep the path
 * smooth). The path is then resampled at equal CIELAB arc length, so equal steps of the
 * data give equal perceived steps of colour.
 *
 * The design rules (monotonic L*, uniform ΔE along the map) are those of P. Kovesi,
 * "Good colour maps: how to design them", arXiv:1509.03700 (2015). Colour science: sRGB
 * (IEC 61966-2-1) with the D65 white, CIE 1976 L*a*b*.
 */

export type Rgb = [number, number, number];
export type Lab = [number, number, number];

/** D65 reference white, XYZ with Y = 1 (IEC 61966-2-1). */
const WHITE: Rgb = [0.95047, 1.0, 1.08883];

function toLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
}

function fromLinear(c: number): number {
  return c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055;
}

function labF(t: number): number {
  const d = 6 / 29;
  return t > d ** 3 ? Math.cbrt(t) : t / (3 * d * d) + 4 / 29;
}

function labFInverse(t: number): number {
  const d = 6 / 29;
  return t > d ? t ** 3 : 3 * d * d * (t - 4 / 29);
}

/** sRGB (components 0..1, gamma-encoded) to CIELAB. */
export function srgbToLab([r, g, b]: Rgb): Lab {
  const R = toLinear(r), G = toLinear(g), B = toLinear(b);
  const X = 0.4124564 * R + 0.3575761 * G + 0.1804375 * B;
  const Y = 0.2126729 * R + 0.7151522 * G + 0.072175 * B;
  const Z = 0.0193339 * R + 0.119192 * G + 0.9503041 * B;
  const fx = labF(X / WHITE[0]), fy = labF(Y / WHITE[1]), fz = labF(Z / WHITE[2]);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** CIELAB to sRGB, not clamped: components outside 0..1 mean out of gamut. */
export function labToSrgb([L, a, b]: Lab): Rgb {
  const fy = (L + 16) / 116;
  const X = WHITE[0] * labFInverse(fy + a / 500);
  const Y = WHITE[1] * labFInverse(fy);
  const Z = WHITE[2] * labFInverse(fy - b / 200);
  const R = 3.2404542 * X - 1.5371385 * Y - 0.4985314 * Z;
  const G = -0.969266 * X + 1.8760108 * Y + 0.041556 * Z;
  const B = 0.0556434 * X - 0.2040259 * Y + 1.0572252 * Z;
  return [fromLinear(R), fromLinear(G), fromLinear(B)];
}

/** Relative luminance Y of an sRGB colour (what a grey rendering keeps). */
export function luminance([r, g, b]: Rgb): number {
  return 0.2126729 * toLinear(r) + 0.7151522 * toLinear(g) + 0.072175 * toLinear(b);
}

function inGamut(rgb: Rgb): boolean {
  return rgb.every((c) => c >= -1e-9 && c <= 1 + 1e-9);
}

/** Largest chroma at lightness L and hue h (degrees) that sRGB can show, by bisection. */
function maxChroma(L: number, hueDeg: number): number {
  const h = (hueDeg * Math.PI) / 180;
  let lo = 0, hi = 150;
  for (let k = 0; k < 40; k++) {
    const c = 0.5 * (lo + hi);
    if (inGamut(labToSrgb([L, c * Math.cos(h), c * Math.sin(h)]))) lo = c;
    else hi = c;
  }
  return lo;
}

/** Lightness at the dark and light ends: dark enough for contrast, short of black and white. */
const L_DARK = 14;
const L_LIGHT = 95;
/** Hue at the dark end and the turn to the light end, degrees in CIELAB (blue-violet → yellow). */
const HUE_DARK = 295;
const HUE_TURN = 165;
/** Fraction of the gamut's chroma used, and a ceiling, so the path has no sharp corners. */
const CHROMA_SHARE = 0.88;
const CHROMA_CEILING = 64;

function pathPoint(t: number): Lab {
  const L = L_DARK + (L_LIGHT - L_DARK) * t;
  const hue = HUE_DARK + HUE_TURN * t;
  // Chroma fades towards both ends, where the gamut narrows to the grey axis.
  const c = Math.min(CHROMA_CEILING * Math.sin(Math.PI * (0.08 + 0.84 * t)), CHROMA_SHARE * maxChroma(L, hue));
  const h = (hue * Math.PI) / 180;
  return [L, c * Math.cos(h), c * Math.sin(h)];
}

export function deltaE76(p: Lab, q: Lab): number {
  return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
}

/**
 * `count` colours along the path at equal CIELAB arc length, as Lab triples.
 * The path is sampled finely, its arc length accumulated, then inverted.
 */
export function colourMapLab(count = 256): Lab[] {
  const fine = 4096;
  const points: Lab[] = [];
  const length = new Float64Array(fine + 1);
  for (let k = 0; k <= fine; k++) {
    points.push(pathPoint(k / fine));
    if (k > 0) length[k] = length[k - 1] + deltaE76(points[k - 1], points[k]);
  }
  const out: Lab[] = [];
  let k = 0;
  for (let m = 0; m < count; m++) {
    const target = (length[fine] * m) / (count - 1);
    while (k < fine - 1 && length[k + 1] < target) k++;
    const span = length[k + 1] - length[k];
    const f = span > 0 ? Math.min(1, Math.max(0, (target - length[k]) / span)) : 0;
    const p = points[k], q = points[k + 1];
    out.push([p[0] + f * (q[0] - p[0]), p[1] + f * (q[1] - p[1]), p[2] + f * (q[2] - p[2])]);
  }
  return out;
}

/** The colour map as sRGB bytes, RGBA, `count` entries: what the shader's lookup texture holds. */
export function colourMapRgba(count = 256): Uint8Array {
  const lab = colourMapLab(count);
  const out = new Uint8Array(4 * count);
  lab.forEach((p, k) => {
    const rgb = labToSrgb(p);
    for (let c = 0; c < 3; c++) out[4 * k + c] = Math.round(255 * Math.min(1, Math.max(0, rgb[c])));
    out[4 * k + 3] = 255;
  });
  return out;
}

/** CSS colour of the map at t ∈ [0, 1]. */
export function colourAt(rgba: Uint8Array, t: number): string {
  const count = rgba.length / 4;
  const k = Math.round(Math.min(1, Math.max(0, t)) * (count - 1));
  return `rgb(${rgba[4 * k]}, ${rgba[4 * k + 1]}, ${rgba[4 * k + 2]})`;
}
