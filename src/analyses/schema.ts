/** Version of every exported result document; bump when a key changes meaning. */
export const SCHEMA_VERSION = 1;

/** Fields every result document starts with. */
export interface ResultHead {
  schemaVersion: number;
  analysis: string;
  source: string;
  width: number;
  height: number;
  pixelSizeUmPerPx: number | null;
  warnings: string[];
}
