import { checkNumber } from '../common/index.ts';
import { makeImage, type Image } from '../image/index.ts';
import { seededRandom } from '../order/index.ts';
import { colourModel, interferenceColour, type ColourModel } from './colourModel.ts';
import { modelToCamera, NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { srgbEncode, type Vec3 } from './colorimetry.ts';
import type { OpticalTrain, SampleRetarder } from './train.ts';

export interface RenderOptions {
  camera?: CameraCalibration;
  /** Gaussian noise SD added to the stored (sRGB-encoded) values, default 0. */
  noiseSd?: number;
  seed?: number;
  /** Quantise to 8 bits like a camera file (default true). */
  eightBit?: boolean;
  name?: string;
}

/**
 * Renders what the camera would record for a sample described per pixel (forward spectral Jones model,
 * camera white balance and exposure, sRGB encoding, clipping, optional noise). Identical samples are
 * rendered once. For test images and the user's "what should I see" previews.
 */
export function renderSampleImage(width: number, height: number, sampleAt: (x: number, y: number) => SampleRetarder,
  train: Partial<OpticalTrain> | ColourModel = {}, options: RenderOptions = {}): Image {
  checkNumber('width', width, 1, 20000, 'px');
  checkNumber('height', height, 1, 20000, 'px');
  const model = 'wx' in train ? train : colourModel(train);
  const camera = options.camera ?? NEUTRAL_CAMERA;
  const sd = checkNumber('noise SD', options.noiseSd ?? 0, 0, 1);
  const rand = seededRandom(options.seed ?? 1);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
  const memo = new Map<string, Vec3>();
  const planes = [new Float32Array(width * height), new Float32Array(width * height), new Float32Array(width * height)];
  const eight = options.eightBit ?? true;
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    const s = sampleAt(x, y);
    const key = `${s.angleRad}|${s.retardanceNm}|${s.birefringenceSign ?? 1}`;
    let enc = memo.get(key);
    if (!enc) {
      const cam = modelToCamera(camera, interferenceColour(model, s).linearRgb);
      enc = cam.map((v) => srgbEncode(Math.min(1, Math.max(0, v)))) as Vec3;
      memo.set(key, enc);
    }
    for (let c = 0; c < 3; c++) {
      let v = enc[c] + (sd > 0 ? sd * gauss() : 0);
      v = Math.min(1, Math.max(0, v));
      if (eight) v = Math.round(v * 255) / 255;
      planes[c][y * width + x] = v;
    }
  }
  return makeImage({ width, height, channels: 3, planes, bitDepth: 8, encoding: 'srgb', source: { name: options.name ?? 'rendered' } });
}
