/**
 * Shaders of a tile's field: each node's log10 concentration placed on the colour range
 * and looked up in the shared colour map, with optional iso-concentration lines.
 */

// The vertex shader puts each node's log10 concentration on the range (t in [0, 1]), so the
// fragment shader can run at medium precision (software WebGL is a third faster so) with
// no visible banding: half floats resolve t to 5e-4, far finer than one of 256 colours.
// The iso-line level keeps high precision.
export const vertexShader = /* glsl */ `
attribute float level;
uniform float lo;
uniform float hi;
uniform float isoStep;
varying float vT;
#ifdef ISO_LINES
varying highp float vIso;
#endif
void main() {
  vT = (level - lo) / max(hi - lo, 1e-6);
#ifdef ISO_LINES
  vIso = level / isoStep;
#endif
  gl_Position = projectionMatrix * modelViewMatrix * vec4(position, 1.0);
}`;

// Position on the range → colour map lookup; iso lines where the level crosses a multiple
// of the step, about 1.2 px wide whatever the zoom (fwidth). The iso-line code is compiled
// in only when the lines are on: software WebGL pays for it on every pixel otherwise.
// Lines are drawn only above the substrate's level (isoFloor, log10 cm^-3): below it a
// layer is in its far tails, and |net doping| below it only in the thin valley at the
// junction, where lines at every level crowd round the contour as a halo. Where lines come
// closer than about 5 px (fwidth of the level above a fifth of a step) the field is not
// resolved at this scale: they fade out, gone by 3 px.
export const fragmentShader = /* glsl */ `
precision mediump float;
uniform sampler2D colourMap;
uniform highp float isoStep;
uniform highp float isoFloor;
varying float vT;
#ifdef ISO_LINES
varying highp float vIso;
#endif
void main() {
  float t = clamp(vT, 0.0, 1.0);
  vec3 c = texture2D(colourMap, vec2(t * (255.0 / 256.0) + 0.5 / 256.0, 0.5)).rgb;
#ifdef ISO_LINES
  highp float d = abs(fract(vIso + 0.5) - 0.5) / max(fwidth(vIso), 1e-6);
  float line = 1.0 - clamp(d - 0.6, 0.0, 1.0);
  highp float level = vIso * isoStep;
  line *= smoothstep(isoFloor + 0.02, isoFloor + 0.08, level);
  line *= 1.0 - smoothstep(0.18, 0.3, fwidth(vIso));
  float light = dot(c, vec3(0.2126, 0.7152, 0.0722));
  c = mix(c, light > 0.45 ? vec3(0.05) : vec3(0.95), 0.75 * line);
#endif
  gl_FragColor = vec4(c, 1.0);
}`;
