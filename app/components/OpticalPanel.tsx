/**
 * Orientation and retardance read from polarised-light colours (README, "Glossary"): the plate reading (one
 * compensator image), the plate pair (two compensator images, the optics turned by 45 deg) or the angle series
 * (crossed polarisers at several angles). The numbers are the worker's `plate` / `platePair` / `angleSeries`
 * results, which are what `retarda plate`, `plate-pair` and `angle-series` print; the command line is shown with them.
 */
import { screenWords } from '../screenWords.ts';
import { useEffect, useImperativeHandle, useRef, useState, type Ref } from 'react';
import {
  COMPENSATOR_OFFSET_DEG, ONE_IMAGE_AXIS_TOLERANCE_DEG, ONE_IMAGE_MIN_RETARDANCE_NM, OPTICS_LIMITS, oneImageGaps, READING_NAMES, type OpticsResult, type ReadingKind,
} from '../../src/analyses/index.ts';
import type { MatchSpace } from '../../src/optics/index.ts';
import { rectText, type Rect } from '../../src/common/index.ts';
import { formatCell } from '../../src/report/index.ts';
import type { AnalysisClient, ImageSource, ProgressFn } from '../worker/client.ts';
import type { Glyph, Picture } from '../worker/protocol.ts';
import type { Layer } from './Viewer.tsx';
import { DEFAULT_OPTICAL_FORM, type OpticalForm, type StoredOptics } from '../storage/records.ts';
import { ColourKey } from './ColourKey.tsx';
import { RetardanceBar } from './RetardanceBar.tsx';
import { Undetermined, Warnings } from './Results.tsx';
import { headline, WithheldCell, WithheldRemedies, WithheldWhy, type Remedy } from './NotDetermined.tsx';
import type { OrientationField } from '../../src/orientation/index.ts';
import type { ViewerBox } from './imageRectangles.ts';
import { formNumber, formRect, NO_PLATE, opticalCommandLine, opticalImages, opticalRequestOf, type OpticalRequest, type PlateSuggestion } from '../analysis/requests.ts';
import { readingKeys, readOptical } from '../analysis/calls.ts';

const f = (v: number | null | undefined) => formatCell(v ?? null);


/** An optical field the viewer can show and the channel profile can use ("the current field"). */
export interface OpticalField {
  imageId: string;
  /** What made it, in plain words. */
  label: string;
  /** The worker key its field is kept under (the reading's first image), for `opticalView`. */
  viewKey: string;
  colour: Layer;
  /** Made when first shown (the worker's `opticalView`); null until then. */
  confidence: Layer | null;
  retardance: Layer | null;
  /** Null when the reading gives no retardance. */
  retardanceRangeNm: [number, number] | null;
  glyphs: Glyph[] | null;
  /** The reading as asked, from which a channel profile on this field is asked and its command line written (app/analysis). */
  request: OpticalRequest;
}

/** What the keyboard can do with a panel: run its analysis with the settings in its form, as its button does. */
export interface PanelHandle { run(): void }

/** The optical panel also takes the remedies offered beside withheld numbers (here and in the profile table). */
export interface OpticalPanelHandle extends PanelHandle { remedy(r: Remedy): void }

export interface PanelContext {
  client: AnalysisClient;
  images: { id: string; name: string }[];
  activeId: string;
  /** Compensator images that go with sets of angle images (the demo's): the angle-series form takes them until one is chosen. */
  plates?: PlateSuggestion[];
  sourceOf(id: string): ImageSource | null;
  /** Runs a job with the app's progress bar and Stop button; errors are shown to the user and give null. */
  runJob<T>(what: string, job: (progress: ProgressFn) => Promise<T>): Promise<T | null>;
  disabled: boolean;
  /** Asks the viewer for a rectangle on the image shown (null when the user cancels). */
  drawRect(hint: string): Promise<Rect | null>;
  /** Rectangles to show on the image (replaces the ones shown before). */
  showBoxes(boxes: ViewerBox[]): void;
}

/** The form as typed; kept with the reading it made (records.ts), so it comes back after a reload. */
type Settings = OpticalForm;

const DEFAULTS: Settings = DEFAULT_OPTICAL_FORM;

/**
 * What the analysis withholds one image's S for even with everything the form can give (sample-free area, a
 * sample retardance above the floor, the axis along the compensator): asked of the analysis itself
 * (oneImageGaps), so the form promises nothing the result will not keep. Null when nothing is left, or when
 * the analysis cannot be asked this way.
 */
function oneImageNeverWhy(compensatorDeg: number): string | null {
  try {
    const gaps = oneImageGaps({ sampleFree: { x: 0, y: 0, width: 1, height: 1 }, sampleRetardanceNm: Math.max(ONE_IMAGE_MIN_RETARDANCE_NM, 1) * 2 }, compensatorDeg,
      { ambiguity: 'mirror-about-compensator' } as OrientationField, compensatorDeg, true);
    return gaps.length ? gaps.join('; ') : null;
  } catch { return null; }
}

/** Whether a form text parses (for the checklist; the run reports what is wrong). */
const parses = <T,>(f: () => T | undefined): T | undefined => { try { return f(); } catch { return undefined; } };

/** Degrees between two axes (0..90). */
const axisAngle = (a: number, b: number) => Math.abs((((a - b) % 180) + 270) % 180 - 90);
/** Degrees between an axis and the nearer of the compensator's axis and its normal (0..45). */
const axisGap = (a: number, b: number) => Math.min(axisAngle(a, b), 90 - axisAngle(a, b));
/** Whether an axis is nearer the normal of the compensator's axis than the axis itself. */
const axisAcross = (a: number, b: number) => axisAngle(a, b) > 45;

const layerOf = (p: Picture): Layer => ({ levels: p.levels, width: p.width, height: p.height, scale: p.scale });

interface OpticalPanelProps {
  ctx: PanelContext;
  /** The reading kept with the session for the image shown (made with it first), shown after a reload too. */
  stored: StoredOptics | null;
  /** Whether the viewer has this reading's maps (they are remade by reading again, not kept). */
  mapShown: boolean;
  onField(f: OpticalField): void;
  /** A new reading for an image, to keep with the session. */
  onReading(imageId: string, reading: StoredOptics): void;
  /** Whether the panel is on screen (its rectangles are shown on the image only then). */
  visible: boolean;
  handle?: Ref<OpticalPanelHandle>;
}

export function OpticalPanel({ ctx, stored, mapShown, onField, onReading, visible, handle }: OpticalPanelProps) {
  const [kind, setKind] = useState<ReadingKind>('plate');
  const [s, setS] = useState<Settings>(DEFAULTS);
  const [formError, setFormError] = useState<string | null>(null);
  const set = (c: Partial<Settings>) => setS((o) => ({ ...o, ...c }));
  /** A field to focus once the form shows it (after a remedy switched the reading or drew a rectangle). */
  const [focusNext, setFocusNext] = useState<'background' | 'retardance' | 'axis' | 'imageB' | null>(null);
  const inputs = {
    background: useRef<HTMLInputElement>(null), retardance: useRef<HTMLInputElement>(null), axis: useRef<HTMLInputElement>(null), imageB: useRef<HTMLSelectElement>(null),
  };
  useEffect(() => {
    if (!focusNext) return;
    const el = inputs[focusNext].current;
    setFocusNext(null);
    el?.scrollIntoView?.({ block: 'center' });
    el?.focus();
  }, [focusNext]); // eslint-disable-line react-hooks/exhaustive-deps
  const [drawingBox, setDrawingBox] = useState<'background' | 'plate' | false>(false);
  const resultsRef = useRef<HTMLDivElement>(null);
  /** Draws the sample-free area on the image; the field gets the rectangle. */
  async function drawBackground() {
    setDrawingBox('background');
    const r = await ctx.drawRect('Drag a rectangle over a part of the image with no sample in it (it calibrates the lamp, camera and compensator). Esc cancels.');
    setDrawingBox(false);
    if (r) { set({ background: rectText(r) }); setFocusNext('background'); }
  }
  /**
   * Draws the angle series' compensator image's sample-free area on the image shown (an image of the series, of the
   * compensator image's size and, as taken, its framing); the field gets the rectangle and the compensator image stays chosen.
   */
  async function drawPlateSampleFree() {
    const plate = plateKey;
    setDrawingBox('plate');
    const r = await ctx.drawRect('Drag a rectangle over a part of the image with no sample in it: the same area of the compensator image calibrates its colours. Esc cancels.');
    setDrawingBox(false);
    if (r) set({ quadPlate: plate, quadPlateBackground: rectText(r) });
  }
  const active = ctx.images.find((i) => i.id === ctx.activeId);
  const others = ctx.images.filter((i) => i.id !== ctx.activeId);
  const choice = { images: ctx.images, activeId: ctx.activeId, plates: ctx.plates };
  const { imageB, angleKeys: quadKeys, plateKey, plateSampleFree } = opticalImages(s, choice);
  // The sample-free area (the angle series' compensator image's) is shown on the image while this panel is.
  const bgRect = kind !== 'angle-series' ? parses(() => formRect(s.background, '')) : plateKey ? parses(() => formRect(plateSampleFree, '')) : undefined;
  const bgKey = bgRect ? `${kind === 'angle-series'} ${rectText(bgRect)}` : '';
  useEffect(() => {
    ctx.showBoxes(visible && bgRect ? [{ rect: bgRect, label: kind === 'angle-series' ? "compensator image's sample-free area" : 'sample-free area' }] : []);
  }, [visible, bgKey]); // eslint-disable-line react-hooks/exhaustive-deps
  useEffect(() => () => ctx.showBoxes([]), []); // eslint-disable-line react-hooks/exhaustive-deps
  // A kept reading brings back the form that made it (after a reload, or on going back to its image).
  useEffect(() => {
    if (stored?.form) { setKind(stored.kind); setS(stored.form); }
  }, [stored]);
  // The first image of a set of angle images that goes with a compensator image (the demo's) opens the angle-series form.
  const activeName = ctx.images.find((i) => i.id === ctx.activeId)?.name;
  const startsAngleSet = !!activeName && !!ctx.plates?.some((p) => p.angles[0] === activeName);
  useEffect(() => {
    if (!stored?.form && startsAngleSet) setKind('angle-series');
  }, [ctx.activeId, startsAngleSet]); // eslint-disable-line react-hooks/exhaustive-deps

  // The compensator axis the reading will use: the one typed, else the polariser's + 45 deg (trainOf in src/analyses).
  const defaultCompDeg = (Number(s.polariserDeg) || OPTICS_LIMITS.polariserDeg.default) + COMPENSATOR_OFFSET_DEG;
  const compDeg = s.compensatorDeg.trim() === '' ? defaultCompDeg : Number(s.compensatorDeg);
  const axis = s.axisDeg.trim() === '' ? null : Number(s.axisDeg);
  const gap = axis === null || !Number.isFinite(axis) ? null : axisGap(axis, compDeg);

  async function ensure(ids: string[], progress: ProgressFn) {
    for (const id of ids) {
      const src = ctx.sourceOf(id);
      if (!src) throw new Error('an image of this reading is no longer in the session');
      await ctx.client.ensure(src, progress);
    }
  }

  /** A remedy for withheld numbers: draw the sample-free area, go to the sample retardance, or switch to a plate pair. */
  function applyRemedy(r: Remedy) {
    if (r === 'platePair') { setKind('plate-pair'); setFocusNext('imageB'); return; }
    setKind('plate');
    if (r === 'background') void drawBackground(); else setFocusNext(r);
  }

  async function run() {
    setFormError(null);
    if (!active) return;
    let request: OpticalRequest;
    try { request = opticalRequestOf(kind, s, choice); } catch (e) { setFormError((e as Error).message); return; }
    const job = async (p: ProgressFn) => { await ensure(readingKeys(request), p); return readOptical(ctx.client, request, p); };
    const what = READING_NAMES[kind][0].toUpperCase() + READING_NAMES[kind].slice(1);
    const reply = await ctx.runJob(what, job);
    if (!reply) return;
    // The answer (or "not determined" and what to do) comes into view, also on a short screen.
    setTimeout(() => resultsRef.current?.scrollIntoView?.({ block: 'nearest' }), 0);
    const imageId = active.id;
    onReading(imageId, { kind, result: reply.result, commandLine: opticalCommandLine(request), rangeNm: reply.retardanceRangeNm, form: s });
    onField({
      imageId, label: READING_NAMES[kind],
      viewKey: request.keys[0], colour: layerOf(reply.colour), confidence: null, retardance: null, retardanceRangeNm: reply.retardanceRangeNm, glyphs: null, request,
    });
  }

  // Without deps: the handle always runs this render's form, as the button does.
  useImperativeHandle(handle, () => ({ run: () => { if (!ctx.disabled && active) void run(); }, remedy: applyRemedy }));

  const field = (label: string, key: keyof Settings, unit = '', placeholder = '', testId?: string) => (
    <label className="field">
      <span>{label}</span>
      <input value={s[key] as string} placeholder={placeholder} data-testid={testId} onChange={(e) => set({ [key]: e.target.value } as Partial<Settings>)} />
      {unit && <span className="unit">{unit}</span>}
    </label>
  );
  const imageSelect = (label: string, value: string, onChange: (v: string) => void, list: { id: string; name: string }[], none: string, testId?: string, ref?: Ref<HTMLSelectElement>, noneValue = '') => (
    <label className="field">
      <span>{label}</span>
      <select ref={ref} value={value} onChange={(e) => onChange(e.target.value)} data-testid={testId}>
        <option value={noneValue}>{none}</option>
        {list.map((i) => <option key={i.id} value={i.id}>{i.name}</option>)}
      </select>
      <span />
    </label>
  );
  /** The sample-free area: typed as x,y,w,h or drawn on the image. */
  const backgroundField = (
    <div className="field field4">
      <label htmlFor="plate-background">Sample-free area</label>
      <input id="plate-background" ref={inputs.background} value={s.background} placeholder="x,y,w,h" data-testid="plate-background" onChange={(e) => set({ background: e.target.value })} />
      <span className="unit">px</span>
      <button className={drawingBox === 'background' ? 'small on' : 'small'} aria-pressed={drawingBox === 'background'} data-testid="draw-background" disabled={!active || !!drawingBox}
        onClick={() => void drawBackground()}>{drawingBox === 'background' ? 'drag on the image…' : 'Draw'}</button>
    </div>
  );

  const axisField = (
    <label className="field">
      <span>Reference axis</span>
      <input ref={inputs.axis} value={s.axisDeg} placeholder={kind === 'plate' ? 'the channel axis' : 'none'} data-testid="optics-axis" onChange={(e) => set({ axisDeg: e.target.value })} />
      <span className="unit">deg</span>
    </label>
  );

  // What one image needs for its order numbers, checked on the form before the run (the analysis decides on the result).
  const retNm = parses(() => formNumber(s.sampleRetardanceNm, ''));
  const needs = kind === 'plate' ? [
    { ok: !!bgRect, text: bgRect ? 'sample-free area given' : 'no sample-free area: draw one (or type x,y,w,h)' },
    {
      ok: retNm !== undefined && retNm >= ONE_IMAGE_MIN_RETARDANCE_NM,
      text: retNm === undefined ? 'sample retardance not given' : retNm < ONE_IMAGE_MIN_RETARDANCE_NM ? `sample retardance below ${ONE_IMAGE_MIN_RETARDANCE_NM} nm: one image cannot read S there` : 'sample retardance given',
    },
    axis === null || !Number.isFinite(axis)
      ? { ok: false, text: `no reference axis: type the channel's axis (along or across the compensator's slow axis, ${f(compDeg)}°); a profile takes it from the walls` }
      : gap !== null && gap > ONE_IMAGE_AXIS_TOLERANCE_DEG
        ? { ok: false, text: `reference axis ${f(gap)}° off the compensator's axes: turn the sample along or across the slow axis (within ${ONE_IMAGE_AXIS_TOLERANCE_DEG}°)` }
        : { ok: true, text: `reference axis ${axisAcross(axis, compDeg) ? 'across' : 'along'} the compensator's slow axis` },
  ] : [];
  const missing = needs.filter((n) => !n.ok).length;
  const never = kind === 'plate' ? oneImageNeverWhy(Number.isFinite(compDeg) ? compDeg : defaultCompDeg) : null;

  const r = stored;
  return (
    <div className="optical">
      <fieldset className="choice" aria-label="Which reading">
        <label><input type="radio" name="reading" checked={kind === 'plate'} onChange={() => setKind('plate')} /> plate reading: one compensator image</label>
        <label><input type="radio" name="reading" checked={kind === 'plate-pair'} onChange={() => setKind('plate-pair')} /> plate pair: two compensator images, optics turned 45°</label>
        <label><input type="radio" name="reading" checked={kind === 'angle-series'} onChange={() => setKind('angle-series')} /> angle series: crossed polarisers at 3 or more angles</label>
      </fieldset>

      {kind === 'plate' && (
        <div className="one-image" data-testid="one-image-needs">
          <p className={missing || never ? 'note warn' : 'note'} data-testid="one-image-status">
            {never
              ? <><strong>One image does not give S</strong> (it is shown as “not determined”): {headline(never)}. It gives the orientation map and the
                retardance. For S, read a plate pair (a second image with the optics turned 45°) <button className="small" data-testid="switch-plate2" onClick={() => applyRemedy('platePair')}>Use a plate pair</button></>
              : missing
                ? <><strong>S will be “not determined”</strong> until one image has all it needs:</>
                : <><strong>One image can give S</strong> with these settings, if the channel lies along or across the compensator.</>}
          </p>
          {never && <p className="note">What the reading uses:</p>}
          <ul className="needs">{needs.map((n) => <li key={n.text} className={n.ok ? 'ok' : 'missing'}><span aria-hidden="true">{n.ok ? '✓' : '✗'}</span> {n.text}</li>)}</ul>
          {backgroundField}
          <label className="field">
            <span>Sample retardance</span>
            <input ref={inputs.retardance} value={s.sampleRetardanceNm} placeholder="thickness × Δn" data-testid="sample-retardance" onChange={(e) => set({ sampleRetardanceNm: e.target.value })} />
            <span className="unit">nm</span>
          </label>
          <label className="field">
            <span>its tolerance ±</span>
            <input value={s.sampleRetardanceToleranceNm} placeholder="10 % of it" data-testid="sample-retardance-tolerance" onChange={(e) => set({ sampleRetardanceToleranceNm: e.target.value })} />
            <span className="unit">nm</span>
          </label>
          {axisField}
          <details className="advice" data-testid="plate-advice">
            <summary>Why one image needs these</summary>
            One colour fits many (angle, retardance) pairs, so the sample retardance must be known, and the colours are calibrated
            on a sample-free area. One image also cannot tell a direction from its mirror image about the compensator's slow axis
            (now {f(compDeg)}°): both give the same colour. Lay the channel or fibre axis along that slow axis (or across it): a rod and its
            mirror image then give the same S. Even so, tested on independent renderings, one image did not read S within 0.03, so it
            shows no S; a plate pair (a second image with the optics turned by 45°) does.
          </details>
          {gap !== null && gap > ONE_IMAGE_AXIS_TOLERANCE_DEG && (
            <p className="note warn">Your reference axis ({f(axis)}°) is {f(gap)}° from the compensator's slow axis (or its normal): one image
              cannot tell a direction there from its mirror image, so S against it is withheld. Turn the sample, or read a plate pair.</p>
          )}
        </div>
      )}
      {kind === 'angle-series' && (
        <p className="note">Crossed polarisers alone give the orientation only up to 90°: a compensator image (optional below) decides which of the two it is.</p>
      )}

      {kind === 'plate-pair' && (
        <>
          <p className="note">This image ({active?.name}) is the first; choose the one taken with the polariser, compensator and analyser turned together by 45° (if the stage was turned instead, the picture turned too: turn it back first).</p>
          {imageSelect('Second image', imageB, (v) => set({ imageB: v }), others, others.length ? 'choose…' : 'add the second image first', 'plate2-image-b', inputs.imageB)}
          {field('Turned by', 'turnDeg', 'deg')}
          {backgroundField}
        </>
      )}
      {kind === 'angle-series' && (
        <>
          {s.quadAngles.map((a, k) => (
            <div className="quad-row" key={k}>
              <select aria-label={`Image ${k + 1}`} value={quadKeys[k]} data-testid={`quad-image-${k}`}
                onChange={(e) => set({ quadImages: s.quadImages.map((v, j) => (j === k ? e.target.value : v)) })}>
                <option value="">image {k + 1}…</option>
                {ctx.images.map((i) => <option key={i.id} value={i.id}>{i.name}</option>)}
              </select>
              <input aria-label={`Angle of image ${k + 1}`} value={a} onChange={(e) => set({ quadAngles: s.quadAngles.map((v, j) => (j === k ? e.target.value : v)) })} />
              <span className="unit">deg</span>
            </div>
          ))}
          {/* A suggested compensator image (a demo set's) is shown chosen; choosing here, or typing its area, keeps the choice. */}
          {imageSelect('Compensator image', plateKey || NO_PLATE, (v) => set({ quadPlate: v, quadPlateBackground: v === plateKey ? plateSampleFree : s.quadPlateBackground }), ctx.images, 'none', 'quad-plate', undefined, NO_PLATE)}
          {plateKey && (
            <div className="field field4">
              <label htmlFor="quad-plate-sample-free">Its sample-free area</label>
              <input id="quad-plate-sample-free" value={plateSampleFree} placeholder="x,y,w,h" data-testid="quad-plate-sample-free" onChange={(e) => set({ quadPlate: plateKey, quadPlateBackground: e.target.value })} />
              <span className="unit">px</span>
              <button className={drawingBox === 'plate' ? 'small on' : 'small'} aria-pressed={drawingBox === 'plate'} data-testid="draw-quad-plate-sample-free" disabled={!active || !!drawingBox}
                onClick={() => void drawPlateSampleFree()}>{drawingBox === 'plate' ? 'drag on the image…' : 'Draw'}</button>
            </div>
          )}
          {/* The analysis withholds S without it (PLATE_SAMPLE_FREE_GAP in src/analyses/optics.ts): said before the run. */}
          {plateKey && !plateSampleFree.trim() && (
            <p className="note warn" data-testid="quad-plate-needs"><strong>S will be “not determined”</strong> until the compensator image has its sample-free
              area: without it the compensator image's colours are not calibrated, and its choice between a direction and the one at 90° to
              it rests on them. Draw it on the image (the compensator image is read pixel by pixel with the angle images, so it has their framing), or type x,y,w,h.</p>
          )}
        </>
      )}

      <details className="settings">
        <summary>Optical train and reading settings</summary>
        {field('Compensator retardance', 'compensatorNm', 'nm', kind === 'angle-series' ? String(OPTICS_LIMITS.compensatorNm.default) : `fit from the sample-free area, else ${OPTICS_LIMITS.compensatorNm.default}`)}
        {field('Compensator slow axis', 'compensatorDeg', 'deg')}
        {field('Polariser', 'polariserDeg', 'deg')}
        <label className="field">
          <span>Lamp</span>
          <select value={s.illuminant} onChange={(e) => set({ illuminant: e.target.value })}>
            <option value="3200K">halogen, 3200 K</option><option value="3000K">halogen, 3000 K</option><option value="D65">daylight (D65)</option><option value="A">tungsten (A, 2856 K)</option>
          </select>
          <span />
        </label>
        {kind !== 'angle-series' && field('Largest retardance', 'retardanceMaxNm', 'nm')}
        {kind !== 'angle-series' && (
          <label className="field"><span>Birefringence</span>
            <select value={s.sign} onChange={(e) => set({ sign: e.target.value as Settings['sign'] })}>
              <option value="positive">positive (length-slow)</option><option value="negative">negative (length-fast)</option>
            </select><span /></label>
        )}
        {kind === 'plate' && (
          <label className="field"><span>Colour match</span>
            <select value={s.match} onChange={(e) => set({ match: e.target.value as MatchSpace })}>
              <option value="lab">colour and brightness</option><option value="chroma">colour only (uneven lamp)</option>
            </select><span /></label>
        )}
      </details>
      {kind !== 'plate' && axisField}
      {kind === 'plate' && (
        <label className="check"><input type="checkbox" checked={s.resolveMirror} onChange={(e) => set({ resolveMirror: e.target.checked })} /> use the texture to settle the mirror choice</label>
      )}
      {formError && <p className="note warn" role="alert">{formError}</p>}
      <button className="primary" disabled={ctx.disabled || !active} onClick={() => void run()} title="Shortcut: R">Read orientation and retardance</button>

      {r && !mapShown && <p className="note" data-testid="optics-kept">Kept from an earlier {READING_NAMES[r.kind]}: its numbers are below; read again to see its maps on the image.</p>}
      <div ref={resultsRef}>{r && <OpticsTable r={r.result} rangeNm={r.rangeNm} onRemedy={r.kind === 'plate' ? applyRemedy : undefined} />}</div>
      {r && <p className="cli" title="Run this to get the same numbers from the command line"><code data-testid="optics-cli">{r.commandLine}</code></p>}
    </div>
  );
}

function OpticsTable({ r, rangeNm, onRemedy }: { r: OpticsResult; rangeNm: [number, number] | null; onRemedy?: (remedy: Remedy) => void }) {
  const c = r.confidence;
  const withheld = r.notDetermined?.order;
  const x = r.reading;
  const reg = x.registration as { shiftPx?: number; dxPx?: number; dyPx?: number } | undefined;
  const cal = (x.calibration ?? x.calibrationA) as { compensatorNm?: number; fitted?: unknown } | null | undefined;
  return (
    <div>
      <table className="results" data-testid="optics-results">
        <tbody>
          {withheld ? <>
            <tr><th scope="row">Director</th><WithheldCell testId="optics-director" /><WithheldWhy why={withheld} rows={r.axisDeg !== null ? 3 : 2} testId="optics-not-determined" /></tr>
            <tr><th scope="row">Order S_2D</th><WithheldCell testId="optics-order2d" /></tr>
            {r.axisDeg !== null && <tr><th scope="row">S_axis at {f(r.axisDeg)}°</th><WithheldCell testId="optics-axis-order" /></tr>}
            <WithheldRemedies why={withheld} onRemedy={onRemedy} />
          </> : <>
            <tr><th scope="row">Director</th><Undetermined why={r.notDetermined?.directorDeg} testId="optics-director">{f(r.directorDeg)}</Undetermined>{!r.notDetermined?.directorDeg && <td>deg, CCW from +x</td>}</tr>
            <tr><th scope="row">Order S_2D</th><td data-testid="optics-order2d">{f(r.order2D)}</td><td>95 %: {f(r.order2DCiLow)} – {f(r.order2DCiHigh)}</td></tr>
            {r.axisDeg !== null && <tr><th scope="row">S_axis at {f(r.axisDeg)}°</th><td data-testid="optics-axis-order">{f(r.axisOrder)}</td><td>95 %: {r.axisOrderCiLow !== null ? `${f(r.axisOrderCiLow)} – ${f(r.axisOrderCiHigh)}` : '–'}</td></tr>}
          </>}
          {r.retardanceNmMedian !== null
            ? <tr><th scope="row">Retardance</th><td data-testid="optics-retardance">{f(r.retardanceNmMedian)}</td><td>nm, median of the confident pixels</td></tr>
            : typeof x.amplitudeMedian === 'number' && <tr><th scope="row">Anisotropy</th><td data-testid="optics-amplitude">{f(x.amplitudeMedian)}</td><td>median amplitude of the angle fit (relative, not nm); residual {f(x.residualMedian as number)}</td></tr>}
          <tr><th scope="row">Confidence</th><td data-testid="optics-confidence">{f(c.mean)}</td><td>mean; median {f(c.median)}; {c.fractionAbove05 === null ? '–' : `${(100 * c.fractionAbove05).toFixed(1)} %`} of pixels ≥ 0.5</td></tr>
          <tr><th scope="row">Pixels used</th><td data-testid="optics-n">{f(r.n)}</td><td>weights: {String(r.options.weighting)}</td></tr>
          <tr><th scope="row">Cannot tell apart</th><td colSpan={2} className="wide" data-testid="optics-ambiguity">{r.ambiguity === 'none' ? 'nothing: full orientation over 180°' : r.ambiguity === 'mod-90' ? 'a direction from the one at 90° to it' : `a direction from its mirror image about the compensator axis (${String(r.options.compensatorDeg ?? '')}°)`}</td></tr>
          {typeof x.mirrorAssumption === 'string' && <tr><th scope="row">Assumed</th><td colSpan={2} className="wide">{x.mirrorAssumption}</td></tr>}
          {typeof x.mirrorChoiceMatteredFraction === 'number' && <tr><th scope="row">Choice mattered</th><td data-testid="optics-mirror-mattered">{f(x.mirrorChoiceMatteredFraction)}</td><td>of the pixels, for S against {f(r.axisDeg)}°</td></tr>}
          {typeof x.mirrorResolvedFraction === 'number' && <tr><th scope="row">Settled by texture</th><td>{f(x.mirrorResolvedFraction)}</td><td>of the pixels</td></tr>}
          {typeof x.plateResolvedFraction === 'number' && <tr><th scope="row">Settled by compensator</th><td>{f(x.plateResolvedFraction)}</td><td>of the pixels</td></tr>}
          {reg && <tr className={(reg.shiftPx ?? 0) > 1 ? 'warn' : ''}><th scope="row">Image shift</th><td data-testid="optics-shift">{f(reg.shiftPx)}</td><td>px between the two images{(reg.shiftPx ?? 0) > 1 ? ': more than 1 px, so the two readings do not describe the same spots; align the images (or the stage) and take them again' : ' (registered)'}</td></tr>}
          {cal && <tr><th scope="row">Compensator</th><td>{f(cal.compensatorNm)}</td><td>nm{cal.fitted ? ', fitted to the sample-free area' : ''}</td></tr>}
        </tbody>
      </table>
      {typeof x.advice === 'string' && !r.warnings.includes(x.advice) && <p className="note">{screenWords(x.advice)}</p>}
      <p className="note">Map colours are at full strength on every usable pixel; “confidence” above the image shows how well each pixel's colour matched.</p>
      <div className="legends">
        <ColourKey size={110} faint={null} />
        {rangeNm && <RetardanceBar rangeNm={rangeNm} />}
      </div>
      <Warnings list={r.warnings} testId="optics-warnings" />
    </div>
  );
}
