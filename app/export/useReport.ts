/** The current view as a picture (the PNG export and the report's figure), and the printable report. */
import { useCallback, useMemo, useState } from 'react';
import { reportContent, type ReportContent } from './reportContent.ts';
import { viewPicturePng, type ViewPictureInput } from './viewPicture.ts';
import { stationDrawing } from '../components/stationMarks.ts';
import { calibrationWords, type Calibration } from '../setups/calibration.ts';
import type { Sessions } from '../session/useSessions.ts';
import type { Analysis } from '../analysis/useAnalysis.ts';

export function useReport(sessions: Sessions, analysis: Analysis, calibration: Calibration) {
  const [printable, setPrintable] = useState<{ content: ReportContent; view: { imageId: string; url: string } | null } | null>(null);
  const { session } = sessions;
  const { shown, active, mode, opacity, drawing, showOptical, opticalHere } = analysis;
  const work = active ? session?.work[active.id] ?? null : null;
  const profile = work?.profile ?? null;
  // The stations of a profile along the channel, drawn on the image to match the station table (the profile was
  // made with these walls, so they passed channelFrame's checks already).
  const stationLines = useMemo(() => (profile && profile.stations.length > 1 ? stationDrawing(profile) : null), [profile]);

  /** The current view as the PNG export draws it (image, shown overlay, walls, scale bar, colour key). */
  const viewPicture = (): ViewPictureInput | null => {
    if (!shown || !active || shown.imageId !== active.id) return null;
    const overlay = mode === 'colour' ? (showOptical ? opticalHere!.colour : shown.colour) : mode === 'coherency' ? (showOptical ? opticalHere!.confidence : shown.coherency) : null;
    const what = overlay ? (mode === 'colour' ? `orientation${showOptical ? ` (${opticalHere!.label})` : `, σ ${session?.settings.sigmaPx} px`}` : showOptical ? 'confidence' : 'coherency') : 'image';
    return {
      image: shown.image, overlay, overlayKind: overlay ? (mode === 'colour' ? 'orientation' : 'coherency') : null, opacity,
      imageWidth: shown.summary.width, imageHeight: shown.summary.height,
      pixelSizeUmPerPx: calibration.umPerPx,
      walls: work?.walls?.walls ?? null, stations: drawing ? null : stationLines, caption: `${active.name}: ${what}; ${calibrationWords(calibration)}`,
    };
  };

  /** A displayable copy of a stored image for the report (browsers show PNG and JPEG, not TIFF). */
  const pictureOf = useCallback(async (id: string): Promise<string | null> => {
    const rec = await sessions.store.image(id);
    return rec && /png|jpe?g/i.test(rec.type || rec.name) ? URL.createObjectURL(rec.blob) : null;
  }, [sessions.store]);

  const openReport = async () => {
    const s = sessions.sessionRef.current;
    if (!s) return;
    await sessions.keeping.flush();
    const pic = viewPicture();
    let view: { imageId: string; url: string } | null = null;
    if (pic && active) {
      try { view = { imageId: active.id, url: URL.createObjectURL(await viewPicturePng(pic)) }; } catch { view = null; }
    }
    setPrintable({ content: reportContent(s), view });
  };

  const closeReport = () => { if (printable?.view) URL.revokeObjectURL(printable.view.url); setPrintable(null); };

  return { printable, viewPicture, pictureOf, openReport, closeReport, stationLines };
}

export type Report = ReturnType<typeof useReport>;
