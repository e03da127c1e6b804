/**
 * The service worker: offline use, and a new version that waits until the user chooses to reload, and only after
 * the work is saved; the page is never reloaded under the user (also when another tab started the new version).
 */
import { useEffect, useState } from 'react';
import type { Say } from './messages.ts';

/** Whether the app works without a network: only once a service worker holds its files; otherwise why not. */
export interface OfflineState { state: 'waiting' | 'ready' | 'unavailable'; why?: string }

/** `flush` writes the open session and says whether everything is stored. */
export function useServiceWorker(flush: () => Promise<boolean>, say: Say) {
  const [update, setUpdate] = useState<null | (() => void)>(null);
  const [offline, setOffline] = useState<OfflineState>({ state: 'waiting' });
  useEffect(() => {
    if (!import.meta.env.PROD) { setOffline({ state: 'unavailable', why: 'the development server keeps no offline copy; the built app does' }); return; }
    if (!('serviceWorker' in navigator)) { setOffline({ state: 'unavailable', why: 'this browser keeps no offline copy of web apps (no service workers)' }); return; }
    let cancelled = false;
    let stop = () => undefined as void;
    void import('workbox-window').then(({ Workbox }) => {
      if (cancelled) return;
      const wb = new Workbox('./sw.js');
      let taken = false, reloading = false;
      wb.addEventListener('controlling', () => { taken = true; if (reloading) window.location.reload(); });
      wb.addEventListener('waiting', () => setUpdate(() => async () => {
        if (!(await flush())) {
          say('error', 'The new version was not started, so that nothing is lost: your latest changes are not saved on this device. Save a backup or work on a copy first.');
          return;
        }
        reloading = true;
        if (taken) window.location.reload(); else wb.messageSkipWaiting();
      }));
      wb.register().catch((e: Error) => {
        setOffline({ state: 'unavailable', why: `the offline copy could not be set up: ${e.message}` });
        say('error', `Offline use is not available: ${e.message}`);
      });
      // Offline only once a service worker holds the app's files.
      void navigator.serviceWorker.ready.then(() => { if (!cancelled) setOffline({ state: 'ready' }); });
      // A tab left open for days still hears of a new version: look hourly and whenever the tab is shown again.
      const look = () => { if (document.visibilityState === 'visible') void wb.update().catch(() => undefined); };
      const timer = setInterval(look, 60 * 60 * 1000);
      document.addEventListener('visibilitychange', look);
      stop = () => { clearInterval(timer); document.removeEventListener('visibilitychange', look); };
    });
    return () => { cancelled = true; stop(); };
  }, [flush, say]);
  return { update, offline };
}
