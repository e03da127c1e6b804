/**
 * Against a variable, as plain data: the screen's form (which reading, the variable's name and unit, each image's
 * value as typed), the points it makes from the readings kept with the session (the same result documents the
 * command line makes, through src/analyses' trendResult), the `retarda trend` line that gives the same numbers
 * (and, when some walls were drawn by hand, the CSV table that line reads), and the exports. No React here.
 */
import {
  TREND_READING_WORDS, TREND_SOURCE, trendCsvRows, trendResult, trendVariable, type DiameterAnalysisOptions, type DiameterDocument, type OrientResult,
  type ProfileResult, type TrendReading, type TrendResult,
} from '../../src/analyses/index.ts';
import { wallsText } from '../../src/channel/index.ts';
import { isInputError } from '../../src/common/index.ts';
import { commandLine, trendArgs, type TrendSettings } from '../../src/options/index.ts';
import { toCsv } from '../../src/report/index.ts';
import { orientOptionsOf } from '../analysis/requests.ts';
import { orientIsStale, profileIsStale } from '../state/session.ts';
import type { ImageWork, SessionRecord } from '../storage/records.ts';

/** The screen's form as typed; kept with the session. */
export interface TrendForm {
  reading: TrendReading;
  /** The variable's name and unit as typed (blank name = "value"). */
  variable: string;
  unit: string;
  /** Each image's value as typed, by image id; an image with a blank value is not in the trend. */
  values: Record<string, string>;
}

/** The reading a session's images most likely have: core S when any has a profile, else whole-image S, else the diameter. */
export function defaultReading(s: Pick<SessionRecord, 'work'>): TrendReading {
  const w = Object.values(s.work);
  return w.some((x) => x.profile) ? 'core' : w.some((x) => x.orient) ? 'whole' : w.some((x) => x.diameter) ? 'diameter' : 'core';
}

export const emptyTrendForm = (s: Pick<SessionRecord, 'work'>): TrendForm => ({ reading: defaultReading(s), variable: '', unit: '', values: {} });

/** What to do on the image screen to get a reading that is missing. */
const MISSING: Record<'orient' | 'profile' | 'diameter', string> = {
  orient: 'no orientation result yet: run "Analyse orientation" on this image',
  profile: 'no channel profile yet: run "Profile across the channel" on this image',
  diameter: 'no fibre diameters yet: measure them on this image (More analyses, "Fibre diameter")',
};

/** The result document a reading comes from, kept with the image, or null. */
export function documentOf(reading: TrendReading, w: ImageWork | undefined): OrientResult | ProfileResult | DiameterDocument | null {
  const source = TREND_SOURCE[reading];
  return (source === 'orient' ? w?.orient : source === 'profile' ? w?.profile : w?.diameter) ?? null;
}

/** The images in the trend (those with a value typed), in the session's order, with the value read as a number. */
export function trendImages(s: SessionRecord, form: TrendForm): { id: string; name: string; value: number }[] {
  return s.images.filter((im) => (form.values[im.id] ?? '').trim() !== '').map((im) => {
    const text = form.values[im.id].trim(), value = Number(text);
    if (!Number.isFinite(value)) throw new Error(`The value of ${im.name} is "${text}", not a number: give it as a number (a decimal point, no unit).`);
    return { id: im.id, name: im.name, value };
  });
}

/** The trend the form asks for, from the session's kept readings; an Error whose message is one plain line when the form cannot give one. */
export function trendOf(s: SessionRecord, form: TrendForm): TrendResult {
  const images = trendImages(s, form);
  if (images.length === 0) throw new Error('No image has a value yet: type the variable\'s value beside each image.');
  try {
    const items = images.map((im) => {
      const doc = documentOf(form.reading, s.work[im.id]);
      return { source: im.name, value: im.value, doc, ...(doc ? {} : { why: MISSING[TREND_SOURCE[form.reading]] }) };
    });
    return trendResult(items, form.reading, trendVariable(form.variable, form.unit));
  } catch (e) {
    if (isInputError(e)) throw new Error((e as Error).message);
    throw e;
  }
}

/** The diameter options a kept diameter document was made with, as `retarda diameter` takes them. */
function diameterOptionsOfDoc(d: DiameterDocument): DiameterAnalysisOptions {
  return {
    ...(d.pixelSizeFrom === 'option' && d.pixelSizeUmPerPx !== null ? { pixelSizeUmPerPx: d.pixelSizeUmPerPx } : {}),
    ...(d.pixelSizeFrom === 'option' && d.pixelSizeUncertainty !== null ? { pixelSizeUncertainty: d.pixelSizeUncertainty } : {}),
    stepPx: d.options.stepPx, averagePx: d.options.averageLengthPx, shadingDegree: d.options.shadingDegree,
    ...(d.options.polarity !== 'auto' ? { polarity: d.options.polarity } : {}),
  };
}

/** The command line of a trend, the CSV table it reads (when walls were drawn by hand) and what it does not reproduce. */
export interface TrendLine {
  line: string;
  /** The table `--table` names: its file name and text; null when the line names the images with --values. */
  table: { name: string; text: string } | null;
  /** Images whose kept readings were made with other settings than the line's (rerun them to match), in words; null when none. */
  differs: string | null;
}

/**
 * `retarda trend` giving the same numbers as the screen: the images by name with --values, or, when a profile reading
 * has walls drawn by hand, a table (image,value,walls: blank walls for those found, with --auto-walls). The options
 * are the session's settings (whole-image S and profiles) or the first diameter's; readings made with other ones are
 * named in `differs`.
 */
export function trendLine(s: SessionRecord, form: TrendForm, stem = 'trend'): TrendLine {
  const images = trendImages(s, form).filter((im) => documentOf(form.reading, s.work[im.id]));
  const variable = trendVariable(form.variable, form.unit);
  const source = TREND_SOURCE[form.reading];
  const settings: TrendSettings = { reading: form.reading, variable, orient: orientOptionsOf(s.settings) };
  const other: string[] = [];
  let table: TrendLine['table'] = null;
  if (source === 'orient') {
    settings.orient = orientOptionsOf(s.settings);
    for (const im of images) if (orientIsStale(s.work[im.id].orient!, s.settings)) other.push(im.name);
  } else if (source === 'profile') {
    settings.orient = { sigmaPx: s.settings.sigmaPx };
    const profiles = images.map((im) => s.work[im.id].profile!);
    const anyFound = profiles.some((p) => p.wallsFound), allFound = profiles.every((p) => p.wallsFound);
    settings.profile = {
      ...(anyFound ? { autoWalls: true } : {}), bins: s.settings.bins, stations: s.settings.stations, coreMax: s.settings.coreMax, skinMin: s.settings.skinMin,
      weighting: s.settings.weighting,
    };
    profiles.forEach((p, k) => { if (profileIsStale(p, s.settings) || p.fieldMethod !== 'texture') other.push(images[k].name + (p.fieldMethod !== 'texture' ? ` (from the ${p.fieldMethod} reading)` : '')); });
    if (!allFound) {
      const name = `${stem}.csv`;
      table = { name, text: toCsv(images.map((im, k) => ({ image: im.name, value: im.value, walls: profiles[k].wallsFound ? null : wallsText(profiles[k].walls) })), ['image', 'value', 'walls']) };
    }
  } else {
    const docs = images.map((im) => s.work[im.id].diameter!);
    settings.diameter = docs.length ? diameterOptionsOfDoc(docs[0]) : {};
    const first = JSON.stringify(settings.diameter);
    docs.forEach((d, k) => { if (JSON.stringify(diameterOptionsOfDoc(d)) !== first) other.push(images[k].name); });
  }
  const words = table ? trendArgs(settings, { table: table.name }) : [...images.map((im) => im.name), ...trendArgs(settings, { values: images.map((im) => im.value) })];
  return {
    line: commandLine('trend', words), table,
    differs: other.length ? `${other.length} of the readings (${other.slice(0, 4).join(', ')}${other.length > 4 ? ', …' : ''}) were made with other settings than this line's; run them again on the image screen for the line to give the same numbers` : null,
  };
}

/** The trend as CSV: the rows `retarda trend --csv` writes (same columns). */
export const trendCsv = (r: TrendResult): string => toCsv(trendCsvRows(r), ['kind', 'image', 'value', 'reading', 'ciLow', 'ciHigh', 'se', 'used', 'notDetermined']);

/** The axis title of the reading: "core S", "fibre diameter, µm". */
export const readingTitle = (r: Pick<TrendResult, 'reading' | 'readingUnit'>): string =>
  `${TREND_READING_WORDS[r.reading]}${r.readingUnit ? `, ${r.readingUnit === 'um' ? 'µm' : 'px'}` : ''}`;

/** The variable's axis title: "draw ratio" or "bath temperature, °C". */
export const variableTitle = (r: Pick<TrendResult, 'variable'>): string => `${r.variable.name}${r.variable.unit ? `, ${r.variable.unit}` : ''}`;

