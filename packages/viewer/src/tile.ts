import * as THREE from 'three';
import type { ColourRange } from './colour-scale.ts';
import { reachDimensions, type ReachDimension } from './dimensions.ts';
import { fragmentShader, vertexShader } from './field-shader.ts';
import type { RunData } from './load.ts';
import {
  layerVertexValues, maskedIntervals, meshLinePositions, nodeGrid, subGridIndices, subGridPositions, subGridValues,
  thinAxis, type NodeGrid, type SubGrid,
} from './mesh-geometry.ts';
import { MASK_BAND_PX, type TileView } from './tile-view.ts';

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

/** Kept node lines are at least this many CSS px apart: finer detail is lost in the pixels. */
export const DETAIL_PX = 2;

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
  private geometry = new THREE.BufferGeometry();
  private readonly field: THREE.Mesh;
  private readonly material: THREE.ShaderMaterial;
  /** log10 |value| at every node of the full grid, per layer */
  private readonly levels = new Map<string, Float32Array>();
  private sub: SubGrid | null = null;
  private detailKey = '';
  private readonly maskGroup = new THREE.Group();
  private readonly maskGeometry = new THREE.PlaneGeometry(1, 1);
  private readonly maskMaterial = new THREE.MeshBasicMaterial({ color: 0x8a8f98 });
  private readonly meshLines: THREE.LineSegments;
  /** junction polylines as flat [x0, z0, x1, z1, …] in µm, drawn by the stage's 2D overlay */
  readonly contours: Float64Array[];
  /** the lateral reach at each mask edge, drawn as dimensions */
  readonly dimensions: ReachDimension[];
  showContours = true;
  private layer = '';
  /** where the tile is drawn: one view per pane, none when it is not drawn */
  views: TileView[] = [];

  constructor(readonly run: RunData, colourMap: THREE.Texture) {
    const { report } = run;
    this.widthUm = report.crossSection.widthUm;
    this.depthUm = run.z[run.z.length - 1];
    this.grid = nodeGrid(run.x, run.z, this.widthUm);
    this.material = new THREE.ShaderMaterial({
      vertexShader, fragmentShader,
      uniforms: { colourMap: { value: colourMap }, lo: { value: 14 }, hi: { value: 20 }, isoStep: { value: 0 }, isoFloor: { value: 0 } },
    });
    this.field = new THREE.Mesh(this.geometry, this.material);
    this.field.frustumCulled = false;
    this.scene.add(this.field);
    this.setDetail(0, 0);

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

    this.dimensions = reachDimensions(report, this.widthUm);
    this.contours = report.junctions.flatMap((j) => j.polylinesUm.map((line) => Float64Array.from(line.flat())));
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
      this.updateLevels();
    }
    this.material.uniforms.lo.value = style.range.lo;
    this.material.uniforms.hi.value = style.range.hi;
    this.material.uniforms.isoStep.value = style.isoStepDecades;
    this.material.uniforms.isoFloor.value = Math.log10(Math.max(1, this.run.report.substrate.concentrationCm3));
    const iso = style.isoStepDecades > 0;
    if (iso !== 'ISO_LINES' in this.material.defines) {
      if (iso) this.material.defines.ISO_LINES = '';
      else delete this.material.defines.ISO_LINES;
      this.material.needsUpdate = true;
    }
    this.maskGroup.visible = style.showMask;
    this.meshLines.visible = style.showMesh;
    this.showContours = style.showContours;
  }

  private fullLevels(): Float32Array {
    let levels = this.levels.get(this.layer);
    if (!levels) {
      const l = this.layerIndex(this.layer);
      levels = l >= 0 ? layerVertexValues(this.run.field, l, this.grid) : new Float32Array(this.grid.xs.length * this.grid.rows);
      this.levels.set(this.layer, levels);
    }
    return levels;
  }

  private updateLevels(): void {
    if (!this.sub) return;
    this.geometry.setAttribute('level', new THREE.BufferAttribute(subGridValues(this.fullLevels(), this.grid, this.sub), 1));
  }

  /**
   * Level of detail: the node lines kept are at least `minX`, `minZ` µm apart (0 keeps
   * all). Spacings are rounded down to a power of two, so zooming rebuilds the geometry
   * only now and then; the old geometry's GPU buffers are freed.
   */
  setDetail(minX: number, minZ: number): void {
    const round = (v: number) => (v > 0 ? 2 ** Math.floor(Math.log2(v)) : 0);
    const rx = round(minX);
    const rz = round(minZ);
    const key = `${rx}:${rz}`;
    if (key === this.detailKey) return;
    this.detailKey = key;
    const sub = { columns: thinAxis(this.grid.xs, rx), rows: thinAxis(this.grid.zs, rz) };
    const geometry = new THREE.BufferGeometry();
    geometry.setAttribute('position', new THREE.BufferAttribute(subGridPositions(this.grid, sub), 3));
    geometry.setIndex(new THREE.BufferAttribute(subGridIndices(sub.columns.length, sub.rows.length), 1));
    this.geometry.dispose();
    this.geometry = geometry;
    this.sub = sub;
    this.field.geometry = geometry;
    if (this.layer) this.updateLevels();
  }

  /** Node lines drawn across and down at the current level of detail. */
  get detail(): [number, number] {
    return [this.sub?.columns.length ?? 0, this.sub?.rows.length ?? 0];
  }

  /** The first view, or null when the tile is not drawn. */
  get view(): TileView | null {
    return this.views[0] ?? null;
  }

  /** Where the tile is drawn; the level of detail follows the scale of the first view. */
  setViews(views: TileView[]): void {
    this.views = views;
    const v = views[0];
    if (!v) return;
    this.maskGroup.scale.y = MASK_BAND_PX / v.pxPerUmZ;
    this.setDetail(DETAIL_PX / v.pxPerUmX, DETAIL_PX / v.pxPerUmZ);
  }

  /** Points the camera at a view's world window (before drawing into it). */
  aim(view: TileView): void {
    this.camera.left = view.x0Um;
    this.camera.right = view.x0Um + view.width / view.pxPerUmX;
    this.camera.top = -view.z0Um;
    this.camera.bottom = -(view.z0Um + view.height / view.pxPerUmZ);
    this.camera.updateProjectionMatrix();
  }

  dispose(): void {
    this.geometry.dispose();
    this.material.dispose();
    this.maskGeometry.dispose();
    this.maskMaterial.dispose();
    this.meshLines.geometry.dispose();
    (this.meshLines.material as THREE.Material).dispose();
    this.levels.clear();
    this.scene.clear();
  }
}
