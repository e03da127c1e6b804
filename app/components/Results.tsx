/** The numbers of the current image, formatted exactly as the command line's table prints them. */
import { screenWords } from '../screenWords.ts';
import type { OrientResult, ProfileResult } from '../../src/analyses/index.ts';
import { formatCell } from '../../src/report/index.ts';
import { NOT_DETERMINED } from '../../src/analyses/index.ts';
import { WithheldCell, WithheldRemedies, WithheldWhy, type Remedy } from './NotDetermined.tsx';

const f = (v: number | null | undefined) => formatCell(v ?? null);
const ci = (lo: number, hi: number) => `${f(lo)} – ${f(hi)}`;

export function OrientTable({ r, stale }: { r: OrientResult; stale: boolean }) {
  return (
    <div>
      {stale && <p className="note">Settings changed since this result: run the analysis again to update it.</p>}
      <table className="results" data-testid="orient-results">
        <tbody>
          <tr><th scope="row">Director</th><Undetermined why={r.notDetermined?.directorDeg} testId="director">{f(r.directorDeg)}</Undetermined>{!r.notDetermined?.directorDeg && <td>deg, CCW from +x</td>}</tr>
          <tr><th scope="row">Order S_2D</th><Undetermined why={r.notDetermined?.order2D} testId="order2d">{f(r.order2D)}</Undetermined>{!r.notDetermined?.order2D && <td>95 %: {ci(r.order2DCiLow, r.order2DCiHigh)}</td>}</tr>
          {r.axisDeg !== null && <tr><th scope="row">S_axis at {f(r.axisDeg)}°</th><td data-testid="axis-order">{f(r.axisOrder)}</td><td>95 %: {r.axisOrderCiLow !== null && r.axisOrderCiHigh !== null ? ci(r.axisOrderCiLow, r.axisOrderCiHigh) : '–'}</td></tr>}
          <tr><th scope="row">Mean coherency</th><td data-testid="coherency">{f(r.coherencyMean)}</td><td>0 = no texture, 1 = straight lines</td></tr>
          <tr><th scope="row">Pixels used</th><td data-testid="n">{f(r.n)}</td><td>{f(r.blocks)} blocks for the interval; weights: {String(r.options.weighting)}</td></tr>
          <tr><th scope="row">Isotropic bias</th><td>{f(r.isotropicBias)}</td><td>S_2D expected from noise alone</td></tr>
        </tbody>
      </table>
      <Warnings list={r.warnings} />
    </div>
  );
}

/**
 * A channel profile's numbers. When the field does not determine the order numbers (`notDetermined.order`, a
 * one-image reading without what it needs), core, skin and ratio each say "not determined", with the reason and
 * the remedies (`onRemedy`) beside them.
 */
export function ProfileTable({ r, stale, onRemedy }: { r: ProfileResult; stale: boolean; onRemedy?: (remedy: Remedy) => void }) {
  const withheld = r.notDetermined?.order;
  // Withheld values are NaN from the worker and null after a JSON round trip: either way they are not shown as numbers.
  // A number is given when it is finite (NaN from the worker, null after a JSON round trip when withheld).
  const given = (v: number | null | undefined) => typeof v === 'number' && Number.isFinite(v);
  const g = (v: number | null | undefined) => (withheld || (r.notDetermined?.clipped && !given(v)) ? NOT_DETERMINED : f(v));
  // Bins and bands with too many pixels at full scale have no S: the reason names them.
  const clippedWhy = (v: number | null | undefined) => (given(v) ? undefined : r.notDetermined?.clipped);
  return (
    <div>
      {stale && <p className="note">Settings changed since this profile: run it again to update it.</p>}
      <table className="results" data-testid="profile-results">
        <tbody>
          {withheld ? <>
            <tr><th scope="row">Core S (position |s| &lt; {String(r.options.coreMax)})</th><WithheldCell testId="core" /><WithheldWhy why={withheld} rows={3} testId="profile-not-determined" /></tr>
            <tr><th scope="row">Skin S (position |s| &gt; {String(r.options.skinMin)})</th><WithheldCell testId="skin" /></tr>
            <tr><th scope="row">Core / skin</th><WithheldCell testId="ratio" /></tr>
            <WithheldRemedies why={withheld} onRemedy={onRemedy} />
          </> : <>
            <tr><th scope="row">Core S (position |s| &lt; {String(r.options.coreMax)})</th><Undetermined why={clippedWhy(r.core.order)} testId="core">{f(r.core.order)}</Undetermined>{given(r.core.order) && <td>95 %: {ci(r.core.ciLow, r.core.ciHigh)}, n {f(r.core.n)}</td>}</tr>
            <tr><th scope="row">Skin S (position |s| &gt; {String(r.options.skinMin)})</th><Undetermined why={clippedWhy(r.skin.order)} testId="skin">{f(r.skin.order)}</Undetermined>{given(r.skin.order) && <td>95 %: {ci(r.skin.ciLow, r.skin.ciHigh)}, n {f(r.skin.n)}</td>}</tr>
            <tr><th scope="row">Core / skin</th><Undetermined why={r.notDetermined?.coreSkinRatio ?? (given(r.core.order) && given(r.skin.order) ? undefined : clippedWhy(NaN))} testId="ratio">{f(r.coreSkinRatio)}</Undetermined>{given(r.coreSkinRatio) && <td>95 %: {ci(r.coreSkinRatioCiLow, r.coreSkinRatioCiHigh)}</td>}</tr>
          </>}
          <tr><th scope="row">Reference axis</th><td>{f(r.axisDeg)}</td><td>deg; channel axis {f(r.channelAxisDeg)}, taper {f(r.taperDeg)}</td></tr>
          <tr><th scope="row">Walls</th><td colSpan={2}>{r.wallsFound ? 'found in the image' : 'drawn by hand'}</td></tr>
        </tbody>
      </table>
      {r.stations.length > 1 && (
        <table className="results compact" data-testid="station-table">
          <thead><tr><th>station</th><th>width px</th><th>core S</th><th>skin S</th><th>core/skin</th></tr></thead>
          <tbody>{r.stations.map((s) => <tr key={s.station}><td>{s.station}</td><td>{f(s.widthPx)}</td><td>{g(s.core.order)}</td><td>{g(s.skin.order)}</td><td>{g(s.coreSkinRatio)}</td></tr>)}</tbody>
        </table>
      )}
      {r.notDetermined?.clipped && !withheld && <p className="not-determined-why" data-testid="clipped-why">{screenWords(r.notDetermined.clipped)}</p>}
      <details>
        <summary>S in each bin ({r.bins.length})</summary>
        <table className="results compact">
          <thead><tr><th>position s</th><th>S_axis</th><th>95 % low</th><th>95 % high</th><th>n</th><th>director deg</th></tr></thead>
          <tbody>{r.bins.map((b) => <tr key={b.s}><td>{f(b.s)}</td><td>{g(b.order)}</td><td>{withheld ? '' : f(b.ciLow)}</td><td>{withheld ? '' : f(b.ciHigh)}</td><td>{f(b.n)}</td><td>{g(b.directorDeg)}</td></tr>)}</tbody>
        </table>
      </details>
      <Warnings list={r.warnings} />
    </div>
  );
}

/**
 * A value cell, or, when the data do not determine the value, "not determined" with the reason and the
 * remedy beside it (spanning the interval column) instead of a number.
 */
export function Undetermined({ why, testId, children }: { why: string | undefined; testId: string; children: React.ReactNode }) {
  if (!why) return <td data-testid={testId}>{children}</td>;
  return (
    <>
      <td data-testid={testId} className="not-determined">{NOT_DETERMINED}</td>
      <td className="not-determined-why">{screenWords(why)}</td>
    </>
  );
}

/** An analysis's warnings in screen words (app/screenWords.ts), beside the numbers they qualify. */
export function Warnings({ list, testId }: { list: readonly string[]; testId?: string }) {
  if (!list.length) return null;
  return <ul className="warnings" data-testid={testId}>{list.map((w) => <li key={w}>{screenWords(w)}</li>)}</ul>;
}
