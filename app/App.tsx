/**
 * The bench app: bring images in, look at them, run the analyses in the worker, see and export the numbers, and
 * keep everything in sessions on the device. This file only puts the parts together:
 * - session/useSessions.ts: the open session, writing it, the saved sessions and backups;
 * - analysis/useAnalysis.ts: the worker, the pictures shown and the analyses' runs (requests.ts: what they ask);
 * - images/useImageIntake.ts: files chosen, dropped or pasted, and the demo images;
 * - useServiceWorker.ts: offline use and new versions; useShortcuts.ts: the keys;
 * - screens/: the header, the first page, the image list, the image with its tools, the analysis panel, the help.
 */
import { useRef, useState } from 'react';
import { useMessages } from './messages.ts';
import { useSessions } from './session/useSessions.ts';
import { useAnalysis } from './analysis/useAnalysis.ts';
import { useImageIntake } from './images/useImageIntake.ts';
import { useServiceWorker } from './useServiceWorker.ts';
import { useShortcuts } from './useShortcuts.ts';
import { useReport } from './export/useReport.ts';
import { useImageRectangles } from './components/imageRectangles.ts';
import type { ViewerHandle } from './components/Viewer.tsx';
import type { MoreAnalysesHandle } from './components/MoreAnalyses.tsx';
import { SessionsPanel } from './components/SessionsPanel.tsx';
import { ScreenGuard } from './components/ScreenGuard.tsx';
import { CameraView } from './camera/CameraView.tsx';
import { CompareView } from './compare/CompareView.tsx';
import { SeriesView, type SeriesKept } from './series/SeriesView.tsx';
import { TrendView } from './trend/TrendView.tsx';
import { SetupsPanel } from './setups/SetupsPanel.tsx';
import { ReportView } from './export/ReportView.tsx';
import { applied } from './setups/setup.ts';
import { calibrationChange, calibrationOf, calibrationWords } from './setups/calibration.ts';
import type { SessionAction } from './state/session.ts';
import { DEFAULT_SETTINGS } from './storage/index.ts';
import { Header, type ScreenName } from './screens/Header.tsx';
import { Welcome } from './screens/Welcome.tsx';
import { ImageList } from './screens/ImageList.tsx';
import { Stage } from './screens/Stage.tsx';
import { AnalysisPanel } from './screens/AnalysisPanel.tsx';
import { HelpPanel } from './screens/HelpPanel.tsx';
import type { Workspace } from './screens/workspace.ts';

export function App() {
  const { messages, say, dismiss } = useMessages();
  // Showing another session lets the pictures of the one before go (the analysis hook is made after the session's).
  const letPicturesGo = useRef(() => undefined as void);
  const sessions = useSessions(say, () => letPicturesGo.current());
  const analysis = useAnalysis(sessions, say);
  letPicturesGo.current = analysis.resetShown;
  const intake = useImageIntake(sessions, analysis, say);
  const { update, offline } = useServiceWorker(sessions.keeping.flush, say);
  const rects = useImageRectangles();
  const viewer = useRef<ViewerHandle>(null);
  const more = useRef<MoreAnalysesHandle>(null);
  const [screen, setScreen] = useState<ScreenName>('images');
  /** The Over time screen's form and last run per session, kept while the page is open. */
  const seriesKept = useRef(new Map<string, SeriesKept>());
  const [showSetups, setShowSetups] = useState(false);
  const [help, setHelp] = useState(false);

  const { session, sessionRef, change } = sessions;
  const { active, shown } = analysis;
  // The one calibration state of the image shown: status line, header, panels, exports and messages all use it.
  const filePx = shown && active && shown.imageId === active.id ? shown.summary.pixelSizeUmPerPx : null;
  const calibration = calibrationOf(session, filePx);
  const recalibrate = (a: SessionAction, what: string) => {
    const before = calibrationOf(sessionRef.current, filePx);
    change(a);
    say('info', `${what}${calibrationChange(before, calibrationOf(sessionRef.current, filePx))}`);
  };
  const report = useReport(sessions, analysis, calibration);
  const w: Workspace = { sessions, analysis, intake, report, say, calibration, recalibrate, rects, viewer, more };
  const toggleScreen = (s: ScreenName) => setScreen((v) => (v === s ? 'images' : s));

  useShortcuts({
    escape: () => {
      if (analysis.busy) analysis.client.cancel();
      analysis.setDrawing(false); rects.cancel(); sessions.setPanelOpen(false); setShowSetups(false); report.closeReport(); setHelp(false);
    },
    busy: !!analysis.busy, imagesShown: screen === 'images', hasImage: !!active,
    actions: {
      o: () => void analysis.runOrient(), w: () => analysis.setDrawing((d) => !d), f: () => void analysis.runFindWalls(), p: () => void analysis.runProfile(),
      i: intake.chooseFiles, s: () => { sessions.setPanelOpen((v) => !v); void sessions.refreshList(); }, '?': () => setHelp((h) => !h),
      '1': () => analysis.setMode('none'), '2': () => analysis.setMode('colour'), '3': () => analysis.setMode('coherency'), '4': () => analysis.setMode('glyphs'),
      m: (shift) => more.current?.stepTab(shift ? -1 : 1), r: () => more.current?.runShown(),
      '+': () => viewer.current?.zoomBy(1.25), '=': () => viewer.current?.zoomBy(1.25), '-': () => viewer.current?.zoomBy(0.8), '0': () => viewer.current?.fit(),
    },
  });

  const settings = session?.settings ?? DEFAULT_SETTINGS;
  const acts = sessions.actions(analysis.report);
  return (
    <div className={`app${intake.dragOver ? ' drag-over' : ''}`} {...intake.dropHandlers}>
      <Header w={w} offline={offline} update={update} messages={messages} dismiss={dismiss} screen={screen} toggleScreen={toggleScreen}
        toggleSetups={() => setShowSetups((v) => !v)} toggleHelp={() => setHelp((h) => !h)} />

      {sessions.panelOpen && (
        <SessionsPanel
          sessions={sessions.listing.sessions} currentId={session?.id ?? null} asideCount={sessions.listing.asideCount} storage={sessions.storage}
          onOpen={acts.open} onNew={acts.create} onRename={acts.rename} onDuplicate={acts.duplicate} onDelete={acts.remove}
          onBackup={acts.backup} onRestore={(f) => void acts.restore(f)} onClose={() => sessions.setPanelOpen(false)}
        />
      )}

      {report.printable && <ReportView content={report.printable.content} view={report.printable.view} onClose={report.closeReport} picture={report.pictureOf} />}

      {showSetups && (
        <SetupsPanel store={sessions.setupStore} applied={session?.setup ?? null} canApply={!!session} lengths={session ? calibrationWords(calibration) : null}
          onApply={(s) => recalibrate({ type: 'applySetup', setup: s ? applied(s) : null }, s ? `Set-up "${s.name}" applied to every image of this session. ` : 'The set-up was removed from this session. ')}
          onError={(m) => say('error', m)} onClose={() => setShowSetups(false)} />
      )}

      {help && <HelpPanel />}

      {screen === 'compare' ? (
        <ScreenGuard key="compare" screen="comparison" onBack={() => setScreen('images')}>
          <CompareView store={sessions.store} current={session} onError={(m) => say('error', m)} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : screen === 'series' ? (
        <ScreenGuard key="series" screen="over time" onBack={() => setScreen('images')}>
          <SeriesView key={session?.id ?? 'none'} w={w} kept={seriesKept.current} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : screen === 'trend' ? (
        <ScreenGuard key="trend" screen="against a variable" onBack={() => setScreen('images')}>
          <TrendView key={session?.id ?? 'none'} w={w} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : screen === 'camera' ? (
        <ScreenGuard key="camera" screen="camera" onBack={() => setScreen('images')}>
          <CameraView sigmaPx={settings.sigmaPx} weighting={settings.weighting} onKeep={(file) => intake.addFiles([file])} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : !active ? <Welcome intake={intake} /> : (
        <ScreenGuard key="images" screen="images">
          <main className="work">
            <ImageList w={w} />
            <Stage w={w} />
            <AnalysisPanel w={w} />
          </main>
        </ScreenGuard>
      )}

      {analysis.busy && (
        <div className="busy" role="status" aria-live="polite" data-testid="busy">
          <span>{analysis.busy.what}: {analysis.busy.stage}</span>
          <progress max={1} value={analysis.busy.fraction} />
          <button onClick={() => analysis.client.cancel()}>Stop (Esc)</button>
        </div>
      )}
    </div>
  );
}
