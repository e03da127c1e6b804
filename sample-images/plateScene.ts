import { join } from 'node:path';
import { renderSampleImage, colourModel, type SampleRetarder } from '../src/optics/index.ts';
import type { ChannelPixel, channelScene } from './make-samples.ts';
import { writePng } from './render.ts';

const DEG = Math.PI / 180;
export const PLATE_SIZE = 900;

/**
 * The channel turned to +45 deg, along the full-wave plate's slow axis (the set-up that needs no
 * mirror assumption), seen with the plate; and the same pixels with the polariser-plate-analyser
 * assembly turned by +45 deg (sample angles -45 deg relative to the optics), for the two-image reading.
 */
export async function renderPlateImages(scene: ReturnType<typeof channelScene>, dir: string): Promise<void> {
  const N = PLATE_SIZE, c = (N - 1) / 2, cx = (scene.width - 1) / 2, cy = (scene.height - 1) / 2;
  const samples: SampleRetarder[] = new Array(N * N);
  for (let Y = 0; Y < N; Y++) for (let X = 0; X < N; X++) {
    // Screen rotation by -45 deg takes plate-image pixels back into the channel's own frame.
    const dx = X - c, dy = Y - c;
    const x = cx + dx * Math.cos(45 * DEG) - dy * Math.sin(45 * DEG);
    const y = cy + dx * Math.sin(45 * DEG) + dy * Math.cos(45 * DEG);
    const p = scene.at(x, y);
    const inFrame = x >= 0 && y >= 0 && x <= scene.width - 1 && y <= scene.height - 1;
    samples[Y * N + X] = inFrame && p.inside
      ? { angleRad: p.directorRad + 45 * DEG, retardanceNm: p.retardanceNm * (0.85 + 0.6 * (p.texture - 0.5)) }
      : { angleRad: 0, retardanceNm: 0 };
  }
  const model = colourModel({});
  for (const [name, turn, seed] of [['kestrel-channel-plate.png', 0, 61], ['kestrel-channel-plate-turned.png', -45, 62]] as const) {
    const img = renderSampleImage(N, N, (X, Y) => {
      const s = samples[Y * N + X];
      return { angleRad: s.angleRad + turn * DEG, retardanceNm: s.retardanceNm };
    }, model, { noiseSd: 0.01, seed, name, camera: { gains: [1, 1, 1], exposure: 0.8 } });
    writePng(join(dir, name), N, N, img.planes, 8);
  }
}

/** The retardance a pixel of the angle series' framing shows (the layer's, varied with the rod texture), nm. */
export function angleSetRetardanceNm(p: ChannelPixel): number {
  return p.retardanceNm * (0.8 + 0.8 * (p.texture - 0.5));
}

/** The compensator image of the angle series' framing (make-samples.ts): its file name, apart from the angle images'. */
export const ANGLE_SET_PLATE_FILE = 'kestrel-angles-plate.png';

/**
 * The angle series' own framing (the channel in its own frame, axis near 0 deg, 960 x 640 px) seen with the
 * full-wave plate in, with the optics of kestrel-channel-plate.png (the same colour model, camera, noise and 8 bits)
 * and, at every pixel, the retardance the angle images show there; outside the channel no sample (the plate's colour).
 * The compensator image that decides the angle series' 90-deg choice.
 */
export function renderAngleSetPlate(scene: ReturnType<typeof channelScene>, dir: string): void {
  const { width: W, height: H } = scene;
  const img = renderSampleImage(W, H, (x, y) => {
    const p = scene.at(x, y);
    return p.inside ? { angleRad: p.directorRad, retardanceNm: angleSetRetardanceNm(p) } : { angleRad: 0, retardanceNm: 0 };
  }, colourModel({}), { noiseSd: 0.01, seed: 63, name: ANGLE_SET_PLATE_FILE, camera: { gains: [1, 1, 1], exposure: 0.8 } });
  writePng(join(dir, ANGLE_SET_PLATE_FILE), W, H, img.planes, 8);
}
