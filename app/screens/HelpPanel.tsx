/** The keyboard shortcuts (useShortcuts.ts does what they say) and the app's version. */

/** The app's version (vite.config.ts). */
declare const __RETARDA_VERSION__: string;

export function HelpPanel() {
  return (
    <section className="help" aria-label="Keyboard shortcuts">
      <h2>Keyboard shortcuts</h2>
      <dl>
        <dt>I</dt><dd>add images</dd><dt>O</dt><dd>orientation analysis</dd><dt>W</dt><dd>draw the two walls</dd><dt>F</dt><dd>find the walls</dd>
        <dt>P</dt><dd>profile across the channel</dd>
        <dt>M</dt><dd>next tab of “More analyses” (Shift+M: the previous one)</dd><dt>R</dt><dd>run the analysis of the tab shown in “More analyses”, with its settings</dd><dt>1 2 3 4</dt><dd>show: image only, orientation colours, coherency, direction lines</dd>
        <dt>+ − 0</dt><dd>zoom in, out, fit</dd><dt>S</dt><dd>saved sessions</dd><dt>Esc</dt><dd>stop the running analysis, close panels</dd><dt>Ctrl+V</dt><dd>paste an image</dd>
      </dl>
      <p className="note" data-testid="app-version">Retarda version {__RETARDA_VERSION__}</p>
    </section>
  );
}
