import type { Plane } from '../common/index.ts';
import { cropPlane, type Tile } from '../image/index.ts';
import { innerRect, streamTileRows, tensorHaloPx, type StructureTensorOptions, type TileRect } from './structureTensor.ts';
import { copyFieldPixels, PIXEL_ARRAYS, type FieldPixels } from './fieldFromTensor.ts';

/**
 * Sharing the tiles of one texture field between workers. Each tile's field pixels depend only on the
 * tile's crop, and every worker runs the same code, so a tile computed elsewhere is the same, bit for bit,
 * as one computed here: the shared field equals the command line's (tests/orientation/tile-share.test.ts).
 */

/** One tile to compute: its crop, the part to keep (in crop pixels) and the resolved tensor options. */
export interface TileJob { crop: Plane; inner: TileRect; options: Required<StructureTensorOptions> }

/** The field pixels (FieldPixels) of a tile's inner part, as arrays of the inner size. */
export interface TilePixels extends FieldPixels { height: number }

/** Computes a tile elsewhere (another worker) and answers what tilePixels would; rejects if it cannot. */
export type TileHelper = (job: TileJob) => Promise<TilePixels>;

/** What a helper runs for each job it is sent. */
export async function tilePixels(job: TileJob): Promise<TilePixels> {
  const { inner, crop } = job;
  const width = inner.x1 - inner.x0, height = inner.y1 - inner.y0, n = width * height;
  const px: TilePixels = { width, height, strength: new Float32Array(n), confidence: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n) };
  const layers = PIXEL_ARRAYS.map((k) => px[k]);
  const tile: Tile = { x: 0, y: 0, w: crop.width, h: crop.height, innerX: inner.x0, innerY: inner.y0, innerW: width, innerH: height };
  await streamTileRows(crop, tile, job.options, 'lean', (y, ...rows) => {
    const at = (y - inner.y0) * width;
    for (let k = 0; k < 4; k++) layers[k].set(rows[k].subarray(inner.x0, inner.x1), at);
  });
  return px;
}

/** Writes the field pixels of a tile of `plane` (the whole plane when null) into `f`, row by row as the kernel makes them. */
async function writeTile(plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, f: FieldPixels): Promise<number> {
  const x0 = tile ? tile.innerX : 0, skip = tile ? tile.innerX - tile.x : 0, len = tile ? tile.innerW : plane.width;
  const layers = PIXEL_ARRAYS.map((k) => f[k]);
  return streamTileRows(plane, tile, o, 'lean', (y, a, b, c, d) => {
    const at = y * f.width + x0;
    layers[0].set(a.subarray(skip, skip + len), at);
    layers[1].set(b.subarray(skip, skip + len), at);
    layers[2].set(c.subarray(skip, skip + len), at);
    layers[3].set(d.subarray(skip, skip + len), at);
  });
}

/**
 * Horizontal strips of about `rows` rows with the tensor's halo above and below: each strip's rows are whole,
 * so no pixel is computed twice across its width, and its inner rows equal the whole image's.
 */
function strips(width: number, height: number, rows: number, halo: number): Tile[] {
  const out: Tile[] = [];
  for (let y0 = 0; y0 < height; y0 += rows) {
    const y1 = Math.min(height, y0 + rows), top = Math.max(0, y0 - halo), bottom = Math.min(height, y1 + halo);
    out.push({ x: 0, y: top, w: width, h: bottom - top, innerX: 0, innerY: y0, innerW: width, innerH: y1 - y0 });
  }
  return out;
}

const nextTurn = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

/** Below this many pixels one worker is quicker than sending tiles about. */
export const SHARE_MIN_PIXELS = 1_000_000;

/** Tiles per worker when sharing: enough that the last tiles are small and no worker waits long at the end. */
const TILES_PER_WORKER = 3;

/** Whether writeTexturePixels shares this plane's strips with the helpers (large enough, and helpers there). */
export const sharesStrips = (plane: Plane, helpers: readonly TileHelper[]): boolean => helpers.length > 0 && plane.width * plane.height >= SHARE_MIN_PIXELS;

/**
 * Writes the texture field pixels of `plane` into `f`. Alone, the whole plane streams through the kernel in
 * one pass, and the largest |value| it read is returned (NaN or infinity when a value is not finite: the
 * caller must then fill those pixels and start again). With helpers (and a large enough image, sharesStrips)
 * it is cut into a few strips per worker, and every worker takes the next strip as soon as it is free; a
 * helper keeps two strips in flight so it never waits for this thread. A strip's inner rows do not depend on
 * how the image was cut (the halo covers both kernels), so any plan gives the same field. Once no strip is
 * left to hand out, this thread does the strips helpers still hold, oldest first, and the first answer for a
 * strip is kept (both are the same bits): a helper slowed by other work on the machine never keeps the field
 * waiting (on two cores shared with other programs a helper's last strips took longer than doing them here).
 * A helper that fails is dropped and its strips done here. Shared, null is returned: the plane must be
 * finite beforehand.
 */
export async function writeTexturePixels(
  plane: Plane, o: Required<StructureTensorOptions>, f: FieldPixels, helpers: readonly TileHelper[] = [],
): Promise<number | null> {
  if (!sharesStrips(plane, helpers)) return writeTile(plane, null, o, f);
  const rows = Math.max(16, Math.ceil(plane.height / (TILES_PER_WORKER * (helpers.length + 1))));
  const queue = strips(plane.width, plane.height, rows, tensorHaloPx(o));
  // Strips written into f, and strips a helper holds (in the order they were handed out).
  const done = new Set<Tile>(), held = new Set<Tile>();
  let finished = false, doing: Tile | undefined;
  const here = async () => {
    for (;;) {
      doing = queue.shift() ?? [...held].find((t) => !done.has(t));
      if (!doing) return;
      await writeTile(plane, doing, o, f);
      done.add(doing);
      // Lets helper replies in, so their next strips go out before this thread starts another.
      await nextTurn();
    }
  };
  if (queue.length < 2) { await here(); return null; }
  const take = (spare: boolean) => {
    const tile = spare && queue.length < 2 ? undefined : queue.shift();
    if (tile) held.add(tile);
    return tile;
  };
  // A helper's second strip waits behind its first: near the end that wait outlasts doing the strip here,
  // so the spare slot only takes a strip while at least one more is left for whoever is free first.
  const remote = async (help: TileHelper, spare: boolean) => {
    for (let tile = take(spare); tile; tile = take(spare)) {
      const inner = { x0: tile.innerX - tile.x, y0: tile.innerY - tile.y, x1: tile.innerX - tile.x + tile.innerW, y1: tile.innerY - tile.y + tile.innerH };
      try {
        const px = await help({ crop: cropPlane(plane, tile), inner, options: o });
        // Done here meanwhile, or the field is finished (and its arrays may serve another): the answer is not needed.
        if (finished || done.has(tile)) continue;
        if (px.width !== tile.innerW || px.height !== tile.innerH) throw new Error('the helper answered with a tile of the wrong size');
        copyFieldPixels(f, px, innerRect(tile), { x: tile.innerX, y: tile.innerY });
        done.add(tile);
      } catch {
        held.delete(tile);
        if (!finished && !done.has(tile) && tile !== doing) queue.push(tile);
        return;
      }
    }
  };
  const helping = helpers.flatMap((h) => [remote(h, false), remote(h, true)]);
  // Every strip is done once this thread finds none left to hand out and none held undone.
  await here();
  finished = true;
  // Answers still on their way are let go (they are caught above).
  void Promise.all(helping);
  return null;
}
