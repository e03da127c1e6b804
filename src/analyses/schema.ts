/**
 * Version of every exported result document; bump when a key changes meaning or name. 2: the renames listed in
 * README, "Changes in schema 2" (upgradeResult reads a schema-1 document with the new names).
 */
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

type Doc = Record<string, unknown>;
const isDoc = (v: unknown): v is Doc => typeof v === 'object' && v !== null && !Array.isArray(v);

/** An interval kept as a two-number array in schema 1, as the two keys `<name>CiLow`, `<name>CiHigh` of schema 2. */
function splitInterval(d: Doc, name: string): void {
  const ci = d[`${name}Ci`];
  if (!(`${name}Ci` in d)) return;
  delete d[`${name}Ci`];
  const pair = Array.isArray(ci) && ci.length === 2 ? ci : [null, null];
  d[`${name}CiLow`] = pair[0];
  d[`${name}CiHigh`] = pair[1];
}

/** Field readers and weightings named in schema 1. */
const FORMER_ANALYSIS: Record<string, string> = { plate2: 'plate-pair', quad: 'angle-series' };
const FORMER_METHOD: Record<string, string> = { 'four-angle': 'angle-series' };
const FORMER_WEIGHTING: Record<string, string> = { energy: 'strength', 'energy-confidence': 'strength-coherency' };

function upgradeOptions(o: unknown, texture: boolean): void {
  if (!isDoc(o)) return;
  if (typeof o.method === 'string') o.method = FORMER_METHOD[o.method] ?? o.method;
  if ('energyFloor' in o) { o.strengthFloor = o.energyFloor; delete o.energyFloor; }
  if ('backgroundDegree' in o) { o.shadingDegree = o.backgroundDegree; delete o.backgroundDegree; }
  const w = o.weighting;
  if (typeof w === 'string') o.weighting = FORMER_WEIGHTING[w] ?? (w === 'confidence' && texture ? 'coherency' : w);
}

function upgradeProfile(p: Doc): void {
  if (typeof p.fieldMethod === 'string') p.fieldMethod = FORMER_METHOD[p.fieldMethod] ?? p.fieldMethod;
  splitInterval(p, 'coreSkinRatio');
  if (Array.isArray(p.stations)) for (const s of p.stations) if (isDoc(s)) splitInterval(s, 'coreSkinRatio');
  upgradeOptions(p.options, p.fieldMethod === 'texture');
}

/**
 * A result document of schema 1 read as schema 2 (README, "Changes in schema 2"): the same numbers under their
 * new names (intervals as `...CiLow` / `...CiHigh`, `reading` for `extra`, the plate pair and angle series by
 * their names, texture strength, the shading degree). A copy is returned; a document of schema 2 or later, or
 * anything that is not a result document, is returned as it is.
 */
export function upgradeResult<T>(doc: T): T {
  if (!isDoc(doc) || doc.schemaVersion !== 1) return doc;
  const d = structuredClone(doc) as Doc;
  d.schemaVersion = SCHEMA_VERSION;
  if (typeof d.analysis === 'string') d.analysis = FORMER_ANALYSIS[d.analysis] ?? d.analysis;
  if ('extra' in d) { d.reading = d.extra; delete d.extra; }
  splitInterval(d, 'order2D');
  splitInterval(d, 'axisOrder');
  if ('backgroundDegree' in d) { d.shadingDegree = d.backgroundDegree; delete d.backgroundDegree; }
  if (d.analysis === 'profile') upgradeProfile(d);
  else upgradeOptions(d.options, d.analysis === 'orient');
  if (isDoc(d.profile)) upgradeProfile(d.profile);
  return d as T;
}

/** Subcommands and options renamed in schema 2, as a command line writes them: [former, now]. */
const FORMER_WORDS: [RegExp, string][] = [
  [/^retarda plate2(?= |$)/, 'retarda plate-pair'], [/^retarda quad(?= |$)/, 'retarda angle-series'],
  [/ --background-degree(?= )/g, ' --shading-degree'], [/ --plate-background(?= )/g, ' --plate-sample-free'],
  [/ --background(?= )/g, ' --sample-free'], [/ --energy-floor(?= )/g, ' --strength-floor'],
  [/ --weighting energy-confidence(?= |$)/g, ' --weighting strength-coherency'], [/ --weighting energy(?= |$)/g, ' --weighting strength'],
];

/**
 * A command line kept with a schema-1 result, in the words of schema 2 (the former words still run, with a notice;
 * this shows the current ones). `--weighting confidence` is left as it is: it is still right for optical readings.
 */
export function upgradeCommandLine(line: string): string {
  return FORMER_WORDS.reduce((s, [former, now]) => s.replace(former, now), line);
}
