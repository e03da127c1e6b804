/** The header: the session and whether it is saved, the engine and offline state, the main buttons; the banners and notes under it. */
import { ownershipWords, saveStateWords } from '../state/keeping.ts';
import { calibrationShort, calibrationWords } from '../setups/calibration.ts';
import { ACCEPT } from '../images/useImageIntake.ts';
import type { Message } from '../messages.ts';
import type { OfflineState } from '../useServiceWorker.ts';
import type { Workspace } from './workspace.ts';

export type ScreenName = 'images' | 'camera' | 'compare' | 'series' | 'trend';

interface HeaderProps {
  w: Workspace;
  offline: OfflineState;
  update: null | (() => void);
  messages: Message[];
  dismiss(id: number): void;
  screen: ScreenName;
  toggleScreen(s: ScreenName): void;
  toggleSetups(): void;
  toggleHelp(): void;
}

export function Header({ w, offline, update, messages, dismiss, screen, toggleScreen, toggleSetups, toggleHelp }: HeaderProps) {
  const { session, keeping, show, refreshList } = w.sessions;
  const { engine, helperCount } = w.analysis;
  const calibration = w.calibration;
  const engineWords = engine === 'starting' ? 'Analysis engine starting…' : engine === 'failed' ? 'Analysis engine failed'
    : offline.state === 'ready' ? 'Works offline' : offline.state === 'unavailable' ? 'Ready (online only)' : 'Ready';
  const engineTitle = [offline.why ? `Not available offline: ${offline.why}.` : '',
    helperCount ? `Large images are shared between ${helperCount + 1} analysis workers (the numbers are the same as with one).` : ''].filter(Boolean).join(' ');
  return (
    <>
      <header className="top">
        <h1>Retarda</h1>
        <span className="session-title" data-testid="session-name">{session ? session.name : 'No session yet'}</span>
        <span className={`save-state ${keeping.saveState}`} data-testid="save-state">{session ? saveStateWords(keeping.saveState) : ''}</span>
        <span className="spacer" />
        <span className={`engine ${engine}`} data-helpers={helperCount} data-offline={offline.state} title={engineTitle || undefined}>{engineWords}</span>
        <button onClick={w.intake.chooseFiles} title="Shortcut: I">Add images…</button>
        <button className={screen === 'camera' ? 'on' : ''} aria-pressed={screen === 'camera'} onClick={() => toggleScreen('camera')}>Camera</button>
        <button className={screen === 'compare' ? 'on' : ''} aria-pressed={screen === 'compare'} onClick={() => { void keeping.flush(); toggleScreen('compare'); }}>Compare</button>
        <button className={screen === 'series' ? 'on' : ''} aria-pressed={screen === 'series'} onClick={() => toggleScreen('series')}
          title="Order of each frame against time, and its relaxation time">Over time</button>
        <button className={screen === 'trend' ? 'on' : ''} aria-pressed={screen === 'trend'} onClick={() => toggleScreen('trend')}
          title="One reading of each image against a process variable (draw ratio, bath temperature, ...), with a fitted line">Against a variable</button>
        <button onClick={toggleSetups} data-testid="setup-button" title={`The microscope's optical train, pixel size and sample sign. Lengths: ${calibrationWords(calibration)}`}>
          Set-up: {session?.setup?.name ?? 'none'}{session && <> · <span className={`calibration-state ${calibration.origin}`} data-testid="calibration-state">{calibrationShort(calibration)}</span></>}</button>
        <button onClick={w.sessions.openPanel} title="Shortcut: S">Sessions</button>
        <button className="quiet" onClick={toggleHelp} aria-label="Keyboard shortcuts" title="Shortcut: ?">?</button>
        <input ref={w.intake.fileInput} type="file" accept={ACCEPT} multiple hidden data-testid="file-input"
          onChange={(e) => { void w.intake.addFiles([...(e.target.files ?? [])]); e.target.value = ''; }} />
      </header>

      {update && <div className="banner" data-testid="update-banner">A new version of the app is ready. <button onClick={update}>Save my work and reload</button></div>}
      {session && keeping.ownership && keeping.ownership.id === session.id && keeping.ownership.mode !== 'own' && (
        <div className="banner warn" role="alert" data-testid="session-elsewhere">
          <span>{ownershipWords(keeping.ownership)}</span>{' '}
          <button onClick={async () => { const c = await keeping.workOnCopy(session); if (c) { show(c); void refreshList(); } }}>Work on a copy here</button>{' '}
          <button onClick={async () => { const s = await keeping.openSaved(session.id); if (s) show(s); }}>
            {keeping.ownership.edited ? 'Open the saved version (drops the changes made here)' : 'Open it here'}</button>
        </div>
      )}
      <div className="messages" aria-live="polite">
        {messages.map((m) => (
          <div key={m.id} className={`message ${m.kind}`} role={m.kind === 'error' ? 'alert' : 'status'}>
            <span>{m.text}</span>
            {m.action && <button onClick={m.action.run}>{m.action.label}</button>}
            <button className="quiet" aria-label="Dismiss" onClick={() => dismiss(m.id)}>×</button>
          </div>
        ))}
      </div>
    </>
  );
}
