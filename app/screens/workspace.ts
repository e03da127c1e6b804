/** What the screens of the app read and act on: the hooks' state, brought together by App. */
import type { RefObject } from 'react';
import type { Sessions } from '../session/useSessions.ts';
import type { Analysis } from '../analysis/useAnalysis.ts';
import type { ImageIntake } from '../images/useImageIntake.ts';
import type { Report } from '../export/useReport.ts';
import type { Say } from '../messages.ts';
import type { Calibration } from '../setups/calibration.ts';
import type { SessionAction } from '../state/session.ts';
import type { ViewerHandle } from '../components/Viewer.tsx';
import type { MoreAnalysesHandle } from '../components/MoreAnalyses.tsx';
import type { useImageRectangles } from '../components/imageRectangles.ts';

export interface Workspace {
  sessions: Sessions;
  analysis: Analysis;
  intake: ImageIntake;
  report: Report;
  say: Say;
  /** The one pixel size of the image shown, and where it came from (setups/calibration.ts). */
  calibration: Calibration;
  /** Applies a change of the session's calibration and says what its lengths now use. */
  recalibrate(a: SessionAction, what: string): void;
  rects: ReturnType<typeof useImageRectangles>;
  viewer: RefObject<ViewerHandle | null>;
  more: RefObject<MoreAnalysesHandle | null>;
}
