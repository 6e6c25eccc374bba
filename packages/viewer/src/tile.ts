import * as THREE from 'three';
import { LineMaterial } from 'three/examples/jsm/lines/LineMaterial.js';
import { LineSegments2 } from 'three/examples/jsm/lines/LineSegments2.js';
import { LineSegmentsGeometry } from 'three/examples/jsm/lines/LineSegmentsGeometry.js';
import type { ColourRange } from './colour-scale.ts';
import { MASK_BAND_PX } from './layout.ts';
import type { RunData } from './load.ts';
import {
  gridIndices, gridPositions, layerVertexValues, maskedIntervals, meshLinePositions, nodeGrid, type NodeGrid,
} from './mesh-geometry.ts';

/** What a tile shows, shared by every tile. */
export interface TileStyle {
  layer: string;
  range: ColourRange;
  /** decades between iso-concentration lines; 0 for none */
  isoStepDecades: number;
  showMask: boolean;
  showMesh: boolean;
  showContours: boolean;
}

/** Where a tile is drawn: a rectangle of the canvas (CSS px) and the world window it shows. */
export interface TileView {
  /** rectangle of the plot area, CSS px from the canvas' top left */
  left: number;
  top: number;
  width: number;
  height: number;
  /** world x at the left edge and depth at the top edge, µm (the top may be above the surface) */
  x0Um: number;
  z0Um: number;
  pxPerUmX: number;
  pxPerUmZ: number;
}

const vertexShader = /* glsl */ `
attribute float level;
varying float vLevel;
void main() {
  vLevel = level;
  gl_Position = projectionMatrix * modelViewMatrix * vec4(position, 1.0);
}`;

// log10 concentration → position on the range → colour map lookup; iso lines where the
// level crosses a multiple of the step, about 1.2 px wide whatever the zoom (fwidth).
const fragmentShader = /* glsl */ `
uniform sampler2D colourMap;
uniform float lo;
uniform float hi;
uniform float isoStep;
varying float vLevel;
void main() {
  float t = clamp((vLevel - lo) / max(hi - lo, 1e-6), 0.0, 1.0);
  vec3 c = texture2D(colourMap, vec2(t * (255.0 / 256.0) + 0.5 / 256.0, 0.5)).rgb;
  if (isoStep > 0.0) {
    float f = vLevel / isoStep;
    float d = abs(fract(f + 0.5) - 0.5) / max(fwidth(f), 1e-6);
    float line = 1.0 - clamp(d - 0.6, 0.0, 1.0);
    float light = dot(c, vec3(0.2126, 0.7152, 0.0722));
    c = mix(c, light > 0.45 ? vec3(0.05) : vec3(0.95), 0.75 * line);
  }
  gl_FragColor = vec4(c, 1.0);
}`;


/**
 * One run's cross-section: owns its geometry, materials and line buffers (GPU memory
 * once drawn) and frees them in dispose(). The colour map texture is shared and owned by
 * the stage.
 */
export class Tile {
  readonly scene = new THREE.Scene();
  readonly camera = new THREE.OrthographicCamera(0, 1, 0, -1, -10, 10);
  readonly grid: NodeGrid;
  readonly widthUm: number;
  readonly depthUm: number;
  private readonly geometry = new THREE.BufferGeometry();
  private readonly material: THREE.ShaderMaterial;
  private readonly levels = new Map<string, Float32Array>();
  private readonly maskGroup = new THREE.Group();
  private readonly maskGeometry = new THREE.PlaneGeometry(1, 1);
  private readonly maskMaterial = new THREE.MeshBasicMaterial({ color: 0x8a8f98 });
  private readonly meshLines: THREE.LineSegments;
  private readonly contourUnder: LineSegments2;
  private readonly contourOver: LineSegments2;
  private readonly contourGeometry = new LineSegmentsGeometry();
  private readonly contourMaterials: LineMaterial[];
  private layer = '';
  view: TileView | null = null;

  constructor(readonly run: RunData, colourMap: THREE.Texture) {
    const { report } = run;
    this.widthUm = report.crossSection.widthUm;
    this.depthUm = run.z[run.z.length - 1];
    this.grid = nodeGrid(run.x, run.z, this.widthUm);
    this.geometry.setAttribute('position', new THREE.BufferAttribute(gridPositions(this.grid), 3));
    this.geometry.setIndex(new THREE.BufferAttribute(gridIndices(this.grid), 1));
    this.material = new THREE.ShaderMaterial({
      vertexShader, fragmentShader,
      uniforms: { colourMap: { value: colourMap }, lo: { value: 14 }, hi: { value: 20 }, isoStep: { value: 0 } },
    });
    const field = new THREE.Mesh(this.geometry, this.material);
    field.frustumCulled = false;
    this.scene.add(field);

    for (const [a, b] of maskedIntervals(report.windows, this.widthUm)) {
      const slab = new THREE.Mesh(this.maskGeometry, this.maskMaterial);
      slab.position.set(0.5 * (a + b), 0.5, 0.1);
      slab.scale.set(b - a, 1, 1);
      this.maskGroup.add(slab);
    }
    this.scene.add(this.maskGroup);

    const meshGeometry = new THREE.BufferGeometry();
    meshGeometry.setAttribute('position', new THREE.BufferAttribute(meshLinePositions(this.grid), 3));
    this.meshLines = new THREE.LineSegments(meshGeometry, new THREE.LineBasicMaterial({ color: 0xffffff, transparent: true, opacity: 0.35 }));
    this.meshLines.position.z = 0.2;
    this.meshLines.visible = false;
    this.scene.add(this.meshLines);

    const segments: number[] = [];
    for (const junction of report.junctions) {
      for (const line of junction.polylinesUm) {
        for (let k = 0; k + 1 < line.length; k++) segments.push(line[k][0], -line[k][1], 0, line[k + 1][0], -line[k + 1][1], 0);
      }
    }
    if (segments.length > 0) this.contourGeometry.setPositions(segments);
    // A dark line under a light one: the contour shows on every colour of the map.
    this.contourMaterials = [
      new LineMaterial({ color: 0x101014, linewidth: 4, worldUnits: false }),
      new LineMaterial({ color: 0xffffff, linewidth: 2, worldUnits: false }),
    ];
    this.contourUnder = new LineSegments2(this.contourGeometry, this.contourMaterials[0]);
    this.contourOver = new LineSegments2(this.contourGeometry, this.contourMaterials[1]);
    this.contourUnder.position.z = 0.3;
    this.contourOver.position.z = 0.4;
    for (const l of [this.contourUnder, this.contourOver]) {
      l.frustumCulled = false;
      l.visible = segments.length > 0;
      this.scene.add(l);
    }
  }

  /** Index of a layer by name in this run, or -1. */
  layerIndex(name: string): number {
    return this.run.layers.indexOf(name);
  }

  /** Largest magnitude of a layer, cm^-3 (0 if the run lacks it). */
  maxMagnitude(name: string): number {
    const l = this.layerIndex(name);
    if (l < 0) return 0;
    const cells = this.grid.columns * this.grid.rows;
    let m = 0;
    for (let k = l * cells; k < (l + 1) * cells; k++) m = Math.max(m, Math.abs(this.run.field[k]));
    return m;
  }

  applyStyle(style: TileStyle): void {
    if (style.layer !== this.layer) {
      this.layer = style.layer;
      let levels = this.levels.get(style.layer);
      if (!levels) {
        const l = this.layerIndex(style.layer);
        levels = l >= 0 ? layerVertexValues(this.run.field, l, this.grid) : new Float32Array(this.grid.xs.length * this.grid.rows);
        this.levels.set(style.layer, levels);
      }
      this.geometry.setAttribute('level', new THREE.BufferAttribute(levels, 1));
    }
    this.material.uniforms.lo.value = style.range.lo;
    this.material.uniforms.hi.value = style.range.hi;
    this.material.uniforms.isoStep.value = style.isoStepDecades;
    this.maskGroup.visible = style.showMask;
    this.meshLines.visible = style.showMesh;
    const hasContours = this.contourGeometry.getAttribute('instanceStart') !== undefined;
    this.contourUnder.visible = style.showContours && hasContours;
    this.contourOver.visible = style.showContours && hasContours;
  }

  /** Points the camera at the view's world window and sizes the mask band to it. */
  setView(view: TileView): void {
    this.view = view;
    const right = view.x0Um + view.width / view.pxPerUmX;
    const bottom = view.z0Um + view.height / view.pxPerUmZ;
    this.camera.left = view.x0Um;
    this.camera.right = right;
    this.camera.top = -view.z0Um;
    this.camera.bottom = -bottom;
    this.camera.updateProjectionMatrix();
    this.maskGroup.scale.y = MASK_BAND_PX / view.pxPerUmZ;
    for (const m of this.contourMaterials) m.resolution.set(view.width, view.height);
  }

  dispose(): void {
    this.geometry.dispose();
    this.material.dispose();
    this.maskGeometry.dispose();
    this.maskMaterial.dispose();
    this.meshLines.geometry.dispose();
    (this.meshLines.material as THREE.Material).dispose();
    this.contourGeometry.dispose();
    for (const m of this.contourMaterials) m.dispose();
    this.levels.clear();
    this.scene.clear();
  }
}

/** World point (x, z in µm) to CSS px in the canvas, for a view. */
export function worldToCanvas(view: TileView, xUm: number, zUm: number): [number, number] {
  return [view.left + (xUm - view.x0Um) * view.pxPerUmX, view.top + (zUm - view.z0Um) * view.pxPerUmZ];
}

export function canvasToWorld(view: TileView, px: number, py: number): [number, number] {
  return [view.x0Um + (px - view.left) / view.pxPerUmX, view.z0Um + (py - view.top) / view.pxPerUmZ];
}
