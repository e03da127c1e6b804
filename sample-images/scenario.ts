/**
 * Parameters of the invented Kestrel demo scenario (see README.md here). Demo only: tests never use
 * these as expected values.
 */
export const PIXEL_SIZE_UM = 0.65;

export const CHANNEL = {
  width: 960,
  height: 640,
  /** Wall lines at x = 0 and x = width - 1, y in px (a slight taper). */
  wallTop: [150, 140] as [number, number],
  wallBottom: [490, 500] as [number, number],
  /** Rod orientation spread (SD of the angle about the local flow direction, degrees) by band. */
  coreSpreadDeg: 28,
  skinSpreadDeg: 12,
  /** Peak retardance of the dope layer, nm (thickness x birefringence of perfect order). */
  retardanceNm: 160,
};

export const FIBRES = {
  width: 1024,
  height: 768,
  list: [
    { x0: 120, y0: -20, angleDeg: -78, diameterUm: 18.0, taperUmPerMm: 0 },
    { x0: 440, y0: -20, angleDeg: -66, diameterUm: 24.5, taperUmPerMm: 6 },
    { x0: 940, y0: -20, angleDeg: -95, diameterUm: 12.0, taperUmPerMm: 0 },
  ],
};

export const MICROMETER = { width: 1280, height: 320, divisionUm: 10, tiltDeg: 2.5 };
