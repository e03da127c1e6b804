import type { Plane } from '../common/index.ts';
import { cropPlane } from '../image/index.ts';
import { innerRect, tensorTiles, withFieldPixelsOf, type StructureTensorOptions, type TileRect } from './structureTensor.ts';
import { copyFieldPixels, type FieldPixels } from './fieldFromTensor.ts';

/**
 * Sharing the tiles of one texture field between workers. Each tile's field pixels depend only on the
 * tile's crop, and every worker runs the same code, so a tile computed elsewhere is the same, bit for bit,
 * as one computed here: the shared field equals the command line's (tests/orientation/tile-share.test.ts).
 */

/** One tile to compute: its crop, the part to keep (in crop pixels) and the resolved tensor options. */
export interface TileJob { crop: Plane; inner: TileRect; options: Required<StructureTensorOptions> }

/** The field pixels of a tile's inner part, as arrays of the inner size. */
export interface TilePixels extends FieldPixels { height: number }

/** Computes a tile elsewhere (another worker) and answers what tilePixels would; rejects if it cannot. */
export type TileHelper = (job: TileJob) => Promise<TilePixels>;

/** What a helper runs for each job it is sent. */
export async function tilePixels(job: TileJob): Promise<TilePixels> {
  const { inner } = job;
  const width = inner.x1 - inner.x0, height = inner.y1 - inner.y0, n = width * height;
  const px: TilePixels = {
    width, height, angleRad: new Float32Array(n), confidence: new Float32Array(n),
    strength: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n),
  };
  await withFieldPixelsOf(job.crop, null, job.options, (all) => copyFieldPixels(px, all, { x0: 0, y0: 0, x1: width, y1: height }, { x: -inner.x0, y: -inner.y0 }));
  return px;
}

const nextTurn = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

/** Below this many pixels one worker is quicker than sending tiles about. */
export const SHARE_MIN_PIXELS = 1_000_000;

/** Tiles per worker when sharing: enough that the last tiles are small and no worker waits long at the end. */
const TILES_PER_WORKER = 3;

/**
 * Writes the texture field pixels of every tile of `plane` into `f`. With helpers (and a large enough
 * image) the image is cut into a few tiles per worker, and every worker takes the next tile, largest
 * first, as soon as it is free; a helper keeps two tiles in flight so it never waits for this thread.
 * The tensor of a tile's inner part does not depend on how the image was cut (the halo covers both
 * kernels), so any plan gives the same field. A helper that fails is dropped and its tiles done here.
 */
export async function writeTexturePixels(
  plane: Plane, o: Required<StructureTensorOptions>, f: FieldPixels, helpers: readonly TileHelper[] = [],
): Promise<void> {
  const n = plane.width * plane.height;
  const sharing = helpers.length > 0 && n >= SHARE_MIN_PIXELS;
  const plan = sharing ? { ...o, tilePixels: Math.min(o.tilePixels, Math.ceil(n / (TILES_PER_WORKER * (helpers.length + 1)))) } : o;
  const queue = tensorTiles(plane.width, plane.height, plan).sort((a, b) => b.innerW * b.innerH - a.innerW * a.innerH);
  const here = async () => {
    for (let tile = queue.shift(); tile; tile = queue.shift()) {
      await withFieldPixelsOf(plane, tile, o, (px) => copyFieldPixels(f, px, innerRect(tile), { x: tile.x, y: tile.y }));
      // Lets helper replies in, so their next tiles go out before this thread starts another.
      if (sharing) await nextTurn();
    }
  };
  if (!sharing || queue.length < 2) { await here(); return; }
  const take = (spare: boolean) => (spare && queue.length < 2 ? undefined : queue.shift());
  // A helper's second tile waits behind its first: near the end that wait outlasts doing the tile here,
  // so the spare slot only takes a tile while at least one more is left for whoever is free first.
  const remote = async (help: TileHelper, spare: boolean) => {
    for (let tile = take(spare); tile; tile = take(spare)) {
      const inner = { x0: tile.innerX - tile.x, y0: tile.innerY - tile.y, x1: tile.innerX - tile.x + tile.innerW, y1: tile.innerY - tile.y + tile.innerH };
      try {
        const px = await help({ crop: cropPlane(plane, tile), inner, options: o });
        if (px.width !== tile.innerW || px.height !== tile.innerH) throw new Error('the helper answered with a tile of the wrong size');
        copyFieldPixels(f, px, innerRect(tile), { x: tile.innerX, y: tile.innerY });
      } catch {
        queue.push(tile);
        return;
      }
    }
  };
  await Promise.all([here(), ...helpers.flatMap((h) => [remote(h, false), remote(h, true)])]);
  // Tiles handed back by a failed helper after this thread had emptied the queue.
  await here();
}
