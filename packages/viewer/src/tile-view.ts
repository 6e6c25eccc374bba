/**
 * Where a tile is drawn: a rectangle of the canvas and the world window it shows, and the
 * conversions between the two. Layout computes views; tiles, the stage and the pointer use
 * them.
 */

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

/** Thickness of the mask band drawn above the surface, CSS px; the view starts a pixel above it. */
export const MASK_BAND_PX = 7;

/** World point (x, z in µm) to CSS px in the canvas, for a view. */
export function worldToCanvas(view: TileView, xUm: number, zUm: number): [number, number] {
  return [view.left + (xUm - view.x0Um) * view.pxPerUmX, view.top + (zUm - view.z0Um) * view.pxPerUmZ];
}

export function canvasToWorld(view: TileView, px: number, py: number): [number, number] {
  return [view.x0Um + (px - view.left) / view.pxPerUmX, view.z0Um + (py - view.top) / view.pxPerUmZ];
}

/** Whether a canvas point falls inside the view's rectangle. */
export function viewContains(view: TileView, px: number, py: number): boolean {
  return px >= view.left && px < view.left + view.width && py >= view.top && py < view.top + view.height;
}
