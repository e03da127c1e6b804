/** Version of every exported result document; bump when a key changes meaning. */
export const SCHEMA_VERSION = 2;

/** Fields every result document starts with. */
export interface ResultHead {
  schemaVersion: number;
  analysis: string;
  source: string;
  width: number;
  height: number;
  pixelSizeUmPerPx: number | null;
  warnings: string[];
  /**
   * Values the data do not determine, by result key (e.g. "coreSkinRatio", "directorDeg"): why, and what
   * would determine them. Such a value is null (NaN) in the result and is shown as "not determined".
   */
  notDetermined?: Record<string, string>;
}

/** The words shown in place of a value the data do not determine. */
export const NOT_DETERMINED = 'not determined';
