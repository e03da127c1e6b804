import { checkNumber, InputError } from '../common/index.ts';
import type { Plane } from '../common/index.ts';

/**
 * One tile of a tiled pass over a large plane. All coordinates are image pixels.
 * (x, y, w, h) is the region to process, i.e. the inner region grown by the overlap on every side
 * and clipped to the image; (innerX, innerY, innerW, innerH) is the part of the result to keep.
 * The inner regions of a plan cover every pixel exactly once.
 */
export interface Tile {
  x: number;
  y: number;
  w: number;
  h: number;
  innerX: number;
  innerY: number;
  innerW: number;
  innerH: number;
}

/**
 * Tiles of inner size `tileSize` (the last row/column smaller) with `overlapPx` extra pixels on each
 * side. A neighbourhood operation of radius r <= overlapPx run on each tile and pasted back with
 * pasteInner gives exactly the whole-image result, as long as the operation treats the image
 * border the same way in both runs (tile edges on the image border are the image border).
 * For Gaussian filters, overlapPx of at least 3 sigma (better 4) keeps the truncation error small.
 *
 * @param tileSize inner tile side in px (>= 1)
 * @param overlapPx margin in px (>= 0)
 */
export function planTiles(width: number, height: number, tileSize: number, overlapPx: number): Tile[] {
  for (const [label, v, min] of [['width', width, 1], ['height', height, 1], ['tileSize', tileSize, 1], ['overlapPx', overlapPx, 0]] as const) {
    checkNumber(label, v, min, Number.MAX_SAFE_INTEGER, 'px');
    if (!Number.isInteger(v)) throw new InputError(`${label} must be a whole number of pixels, got ${v}`, `Round ${label}`);
  }
  const tiles: Tile[] = [];
  for (let innerY = 0; innerY < height; innerY += tileSize) {
    const innerH = Math.min(tileSize, height - innerY);
    const y = Math.max(0, innerY - overlapPx);
    const h = Math.min(height, innerY + innerH + overlapPx) - y;
    for (let innerX = 0; innerX < width; innerX += tileSize) {
      const innerW = Math.min(tileSize, width - innerX);
      const x = Math.max(0, innerX - overlapPx);
      const w = Math.min(width, innerX + innerW + overlapPx) - x;
      tiles.push({ x, y, w, h, innerX, innerY, innerW, innerH });
    }
  }
  return tiles;
}

/** @throws InputError when the tile does not lie wholly inside the plane */
export function checkTileInside(plane: Plane, tile: Tile): void {
  if (tile.x < 0 || tile.y < 0 || tile.x + tile.w > plane.width || tile.y + tile.h > plane.height) {
    throw new InputError(`tile ${tile.w}x${tile.h} at (${tile.x}, ${tile.y}) lies outside the ${plane.width}x${plane.height} plane`,
      'Plan the tiles for this plane size');
  }
}

/** A copy of the tile's region (x, y, w, h) of `plane`, as its own w x h plane. */
export function cropPlane(plane: Plane, tile: Tile): Plane {
  checkTileInside(plane, tile);
  const data = new Float32Array(tile.w * tile.h);
  for (let r = 0; r < tile.h; r++) {
    const from = (tile.y + r) * plane.width + tile.x;
    data.set(plane.data.subarray(from, from + tile.w), r * tile.w);
  }
  return { width: tile.w, height: tile.h, data };
}

/**
 * Copies the inner region of `src` (a result computed on the tile's w x h region) into `dst` at the
 * inner region's image position. `dst` is changed in place.
 */
export function pasteInner(dst: Plane, src: Plane, tile: Tile): void {
  if (src.width !== tile.w || src.height !== tile.h) {
    throw new InputError(`tile result is ${src.width}x${src.height} but the tile is ${tile.w}x${tile.h}`,
      'Paste the result computed on this tile');
  }
  if (tile.innerX + tile.innerW > dst.width || tile.innerY + tile.innerH > dst.height) {
    throw new InputError(`tile inner region lies outside the ${dst.width}x${dst.height} destination`,
      'Plan the tiles for this plane size');
  }
  const offX = tile.innerX - tile.x;
  const offY = tile.innerY - tile.y;
  for (let r = 0; r < tile.innerH; r++) {
    const from = (offY + r) * src.width + offX;
    dst.data.set(src.data.subarray(from, from + tile.innerW), (tile.innerY + r) * dst.width + tile.innerX);
  }
}
