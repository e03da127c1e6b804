/**
 * What the printable report says, assembled from the session record alone: for each analysed image
 * the numbers with their 95 % intervals and n, the settings that made them, the equivalent command
 * lines and the calibration state; the applied set-up; and the note on what the numbers are.
 * Pure, so the content is unit-tested; ReportView only lays it out.
 */
import { READING_NAMES, type OpticsResult, type OrientResult, type ProfileResult, type ReadingKind } from '../../src/analyses/index.ts';
import type { DiameterDocument } from '../../src/analyses/index.ts';
import type { SessionRecord, StoredDiameterRun, StoredOptics } from '../storage/records.ts';
import { setupCommandOptions, setupSummary } from '../setups/setup.ts';
import { calibrationOf, calibrationWords, isMeasured, umPerPxText } from '../setups/calibration.ts';
import { wallsText } from '../../src/channel/index.ts';
import type { Weighting } from '../../src/order/index.ts';
import { orientCommandLine, textureProfileCommandLine } from '../analysis/requests.ts';

export interface ReportNumber {
  label: string;
  value: number | null;
  /** 95 % interval, when the analysis gives one. */
  ci: [number, number] | null;
  n: number | null;
  unit: string;
  /** Why the data do not determine this number (then `value` is null): printed in its place. */
  notDetermined?: string;
}

export interface ReportImage {
  id: string;
  name: string;
  /** Size and pixel size the numbers were made with. */
  facts: string;
  calibration: string;
  sections: { title: string; numbers: ReportNumber[]; settings: string[]; commandLine: string | null; warnings: string[] }[];
}

export interface ReportContent {
  title: string;
  madeAt: string;
  setup: { name: string; summary: string; commandOptions: string[] } | null;
  /** The session's pixel size and where it came from, when the session gives one (a micrometer choice or the set-up). */
  lengths: string | null;
  images: ReportImage[];
  /** Images of the session with nothing analysed, named so the reader knows they were left out. */
  notAnalysed: string[];
  note: string;
}

/** Always printed: what these numbers are and are not. */
export const REPORT_NOTE = 'These are measurements made from microscope images, with the settings, calibration state and 95 % intervals stated here. They are not a safety or quality certification of any material or product.';

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** Marks a number withheld for `why` (no value, no interval). */
const withheld = (n: ReportNumber, why: string | undefined): ReportNumber => (why ? { ...n, value: null, ci: null, notDetermined: why } : n);

/** The order numbers of an orientation or optical result, each withheld where the result says the data do not determine it. */
function orderNumbers(r: OrientResult | OpticsResult): ReportNumber[] {
  const all = r.notDetermined?.order;
  const numbers: ReportNumber[] = [
    withheld({ label: 'Order S_2D', value: num(r.order2D), ci: [r.order2DCiLow, r.order2DCiHigh], n: r.n, unit: '' }, all),
    withheld({ label: 'Director', value: num(r.directorDeg), ci: null, n: r.n, unit: 'deg CCW from +x' }, all ?? r.notDetermined?.directorDeg),
  ];
  if (r.axisDeg !== null) numbers.push(withheld({ label: `S_axis against ${r.axisDeg}°`, value: num(r.axisOrder), ci: r.axisOrderCiLow !== null && r.axisOrderCiHigh !== null ? [r.axisOrderCiLow, r.axisOrderCiHigh] : null, n: r.n, unit: '' }, all));
  return numbers;
}

function orientSection(r: OrientResult, name: string): ReportImage['sections'][number] {
  const o = r.options as { sigmaPx?: number; weighting?: string; blockPx?: number; method?: string };
  const numbers = orderNumbers(r);
  numbers.push({ label: 'Mean coherency', value: num(r.coherencyMean), ci: null, n: r.n, unit: '' });
  return {
    title: 'Orientation (structure tensor)', numbers,
    settings: [`texture scale σ ${o.sigmaPx ?? '?'} px`, `pixel weights: ${o.weighting ?? '?'}`, `interval blocks ${o.blockPx ?? '?'} px (${r.blocks} blocks)`],
    commandLine: orientCommandLine(name, { sigmaPx: o.sigmaPx, weighting: o.weighting as Weighting | undefined, ...(r.axisDeg !== null ? { axisDeg: r.axisDeg } : {}) }),
    warnings: r.warnings,
  };
}

function profileSection(r: ProfileResult, name: string): ReportImage['sections'][number] {
  const o = r.options as { sigmaPx?: number; weighting?: string; bins?: number; stations?: number; coreMax?: number; skinMin?: number };
  const texture = r.fieldMethod === 'texture';
  const all = r.notDetermined?.order;
  return {
    title: `Across the channel (${texture ? 'structure tensor' : READING_NAMES[r.fieldMethod as ReadingKind] ?? r.fieldMethod})`,
    numbers: [
      withheld({ label: `Core S (position |s| < ${o.coreMax})`, value: num(r.core.order), ci: [r.core.ciLow, r.core.ciHigh], n: r.core.n, unit: '' }, all),
      withheld({ label: `Skin S (position |s| > ${o.skinMin})`, value: num(r.skin.order), ci: [r.skin.ciLow, r.skin.ciHigh], n: r.skin.n, unit: '' }, all),
      withheld({ label: 'Core / skin', value: num(r.coreSkinRatio), ci: [r.coreSkinRatioCiLow, r.coreSkinRatioCiHigh], n: null, unit: '' }, all ?? r.notDetermined?.coreSkinRatio),
      { label: 'Reference axis', value: num(r.axisDeg), ci: null, n: null, unit: 'deg' },
    ],
    settings: [
      `walls ${r.wallsFound ? 'found in the image' : `drawn by hand: ${wallsText(r.walls)} px`}`, `${o.bins} bins across, ${o.stations} station(s)`,
      `texture scale σ ${o.sigmaPx} px`, `pixel weights: ${o.weighting}`,
    ],
    // The command line reproduces texture profiles; optical ones are made by the reader named in the title.
    commandLine: texture ? textureProfileCommandLine(name, { sigmaPx: o.sigmaPx }, {
      ...(r.wallsFound ? { autoWalls: true } : { channel: { walls: r.walls } }), bins: o.bins, stations: o.stations, coreMax: o.coreMax, skinMin: o.skinMin,
      weighting: o.weighting as Weighting | undefined,
    }) : null,
    warnings: r.warnings,
  };
}

const OPTICS_TITLES: Record<StoredOptics['kind'], string> = {
  plate: 'Plate reading: one compensator image', 'plate-pair': 'Plate pair: two compensator images, optics turned 45°', 'angle-series': 'Angle series: crossed polarisers at several angles',
};

function opticsSection(o: StoredOptics): ReportImage['sections'][number] {
  const r = o.result;
  return {
    title: OPTICS_TITLES[o.kind],
    numbers: [
      ...orderNumbers(r),
      ...(r.retardanceNmMedian !== null ? [{ label: 'Retardance (median)', value: num(r.retardanceNmMedian), ci: null, n: r.n, unit: 'nm' }] : []),
    ],
    settings: [`pixel weights: ${String(r.options.weighting ?? 'none')}`, ...(typeof r.reading.mirrorAssumption === 'string' ? [`assumed: ${r.reading.mirrorAssumption}`] : [])],
    commandLine: o.commandLine,
    warnings: r.warnings,
  };
}

function diameterSection(d: DiameterDocument, run: StoredDiameterRun | null, name: string): ReportImage['sections'][number] {
  const um = num(d.meanUm) !== null;
  const o = d.options as { stepPx?: number; polarity?: string };
  const args = ['retarda diameter', /^[\w.\-/]+$/.test(name) ? name : `"${name.replace(/"/g, '\\"')}"`];
  if (d.pixelSizeFrom === 'option' && d.pixelSizeUmPerPx) args.push(`--um-per-px ${d.pixelSizeUmPerPx}`);
  if (o.stepPx !== undefined) args.push(`--step-px ${o.stepPx}`);
  if (o.polarity !== undefined) args.push(`--polarity ${o.polarity}`);
  return {
    title: 'Fibre diameter',
    numbers: [{
      label: 'Mean diameter', value: num(um ? d.meanUm : d.meanPx),
      ci: um ? (num(d.ciLowUm) !== null ? [d.ciLowUm as number, d.ciHighUm as number] : null) : (num(d.ciLowPx) !== null ? [d.ciLowPx as number, d.ciHighPx as number] : null),
      n: num(d.n), unit: um ? 'µm' : 'px',
    }],
    settings: [
      `${d.fibres.length} fibre(s), ${d.dropped} station(s) dropped`,
      `pixel size ${d.pixelSizeUmPerPx ? `${umPerPxText(d.pixelSizeUmPerPx, isMeasured(run?.pixelSizeFrom ?? ''))} µm/px from the ${run?.pixelSizeFrom ?? (d.pixelSizeFrom === 'option' ? 'value given' : "file's resolution tags")}` : 'unknown: lengths in px'}`,
      d.interval,
    ],
    commandLine: args.join(' '),
    warnings: d.warnings,
  };
}

/** Assembles the report of a session. */
export function reportContent(s: SessionRecord, now = new Date()): ReportContent {
  const images: ReportImage[] = [];
  const notAnalysed: string[] = [];
  for (const img of s.images) {
    const w = s.work[img.id];
    const sections = [
      ...(w?.orient ? [orientSection(w.orient, img.name)] : []),
      ...(w?.profile ? [profileSection(w.profile, img.name)] : []),
      ...(w?.optics ? [opticsSection(w.optics)] : []),
      ...(w?.diameter ? [diameterSection(w.diameter, w.diameterRun ?? null, img.name)] : []),
    ];
    if (!sections.length) { notAnalysed.push(img.name); continue; }
    const any = w!.orient ?? w!.profile ?? w!.optics?.result ?? w!.diameter!;
    // The file's own pixel size: what the texture and optical results read from it; a diameter's only when it used the file's.
    const fromResults = [w!.orient, w!.profile, w!.optics?.result].map((r) => num(r?.pixelSizeUmPerPx)).find((v) => v !== null) ?? null;
    const filePx = fromResults ?? (w!.diameter?.pixelSizeFrom === 'file' ? num(w!.diameter.pixelSizeUmPerPx) : null);
    const px = calibrationOf(s, filePx);
    const calibration = `${calibrationWords(px)}${px.origin !== 'file' && px.umPerPx !== null && filePx ? ` (the file says ${umPerPxText(filePx)} µm/px)` : ''}`;
    images.push({ id: img.id, name: img.name, facts: `${any.width} × ${any.height} px`, calibration, sections });
  }
  return {
    title: `Retarda report: ${s.name}`,
    madeAt: now.toISOString(),
    setup: s.setup ? { name: s.setup.name, summary: setupSummary(s.setup), commandOptions: [...setupCommandOptions(s.setup).train, ...setupCommandOptions(s.setup).lengths] } : null,
    lengths: (() => { const c = calibrationOf(s, null); return c.umPerPx === null ? null : calibrationWords(c); })(),
    images, notAnalysed, note: REPORT_NOTE,
  };
}
