/**
 * A per-pixel orientation field: the shared result of every orientation reader (structure tensor,
 * plate reading, plate pair, angle series), so all of them feed the same order parameters,
 * channel profiles and exports.
 */
export interface OrientationField {
  width: number;
  height: number;
  /**
   * Direction along the structure (the slow axis for optical readers), CCW as displayed, (-pi/2, pi/2]. A texture
   * field makes it from cos2 and sin2 the first time it is read (src/orientation/derivedLayers.ts).
   */
  angleRad: Float32Array;
  /** Coherency for texture fields; for optical readings their confidence (colour-match quality for the plate reading and pair, fit quality for the angle series); in [0, 1]. */
  confidence: Float32Array;
  /** 1 = usable pixel. */
  mask: Uint8Array;
  /** Optical readers: retardance per pixel in nm. */
  retardanceNm?: Float32Array;
  /**
   * Optical readers: 1 where an input image is at full scale (clipped), so the pixel was not read. Which
   * pixels clip depends on their angle, so a region with many of them would give a biased S.
   */
  clipped?: Uint8Array;
  /**
   * cos 2 theta and sin 2 theta, when the reader gets them without trigonometry (the structure tensor
   * does): order parameters then need no per-pixel angle.
   */
  cos2?: Float32Array;
  sin2?: Float32Array;
  /** Texture reader: texture strength, the tensor trace Jxx + Jyy (used for masking and as weight). */
  strength?: Float32Array;
  method: 'texture' | 'plate' | 'plate-pair' | 'angle-series';
  /**
   * What the reader cannot tell apart: 'mirror-about-compensator' = theta vs (2*compensatorAxis - theta);
   * 'mod-90' = theta vs theta + 90 deg.
   */
  ambiguity: 'none' | 'mirror-about-compensator' | 'mod-90';
  /**
   * Where the ambiguity was resolved for some pixels only (e.g. by a compensator image): 1 = this
   * pixel is still ambiguous. Absent = every pixel carries the field's ambiguity.
   */
  ambiguous?: Uint8Array;
  /** Compensator slow-axis angle in degrees, for 'mirror-about-compensator'. */
  ambiguityAxisDeg?: number;
  pixelSizeUmPerPx?: number;
  /** The options that produced the field, so the result can be re-run. */
  options: Record<string, unknown>;
  warnings: string[];
}
