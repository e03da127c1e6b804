import { DEG } from '../common/index.ts';
import { colourModel, interferenceColour, matchLabOfLinearRgb, type ColourModel } from './colourModel.ts';
import { cameraToModel, type CameraCalibration } from './camera.ts';
import { cellLinearRgb } from './pixels.ts';
import type { Vec3 } from './colorimetry.ts';

/**
 * First-order plate reading, Gamma_eff = Gamma_p + Gamma cos 2(theta - axis): the nearest colour (CIELAB) in the
 * sequence of one retarder at 45 deg between the train's polars, for Gamma_eff from loNm to hiNm.
 */
export class EffectiveRetardanceReader {
  private readonly labs: Float32Array;
  constructor(model: ColourModel, private readonly loNm: number, hiNm: number, private readonly stepNm = 1) {
    const t = model.train;
    const plain = colourModel({ ...t, compensator: null });
    const n = Math.floor((hiNm - loNm) / stepNm) + 1;
    this.labs = new Float32Array(3 * n);
    for (let k = 0; k < n; k++) {
      const c = interferenceColour(plain, { angleRad: (t.polariserDeg + 45) * DEG, retardanceNm: loNm + k * stepNm });
      this.labs.set(matchLabOfLinearRgb(c.linearRgb), 3 * k);
    }
  }

  read(lab: Vec3): number {
    const L = this.labs;
    let best = 0, bestD = Infinity;
    for (let k = 0; k < L.length / 3; k++) {
      const a = L[3 * k] - lab[0], b = L[3 * k + 1] - lab[1], c = L[3 * k + 2] - lab[2];
      const d = a * a + b * b + c * c;
      if (d < bestD) { bestD = d; best = k; }
    }
    return this.loNm + best * this.stepNm;
  }
}

/**
 * Per colour-cube cell, made the first time a pixel falls in it: Lab (camera calibration removed) and, with a
 * reader, the effective retardance.
 */
export class CellColours {
  readonly lab: Float32Array;
  readonly eff: Float32Array;
  private readonly done: Uint8Array;
  constructor(private readonly camera: CameraCalibration, private readonly bits: number, private readonly reader?: EffectiveRetardanceReader) {
    const nCells = 1 << (3 * bits);
    this.lab = new Float32Array(3 * nCells); this.eff = new Float32Array(nCells); this.done = new Uint8Array(nCells);
  }

  /** Makes cell c's entries unless made; true when they were made now. */
  ensure(c: number): boolean {
    if (this.done[c]) return false;
    const l = matchLabOfLinearRgb(cameraToModel(this.camera, cellLinearRgb(c, this.bits)));
    this.lab.set(l, 3 * c);
    if (this.reader) this.eff[c] = this.reader.read(l);
    this.done[c] = 1;
    return true;
  }
}
