// The retarda command as a whole process (the sources through tsx, as `npm run build:cli` bundles them), that also writes its peak resident
// memory (process.resourceUsage().maxRSS, KiB) to the file named by RETARDA_MAXRSS_FILE on exit, so a
// test can measure memory without adding a line to the command's own output.
// With --decode-only FILE it only reads and decodes the file (every page), for the reader's own figure.
import { writeFileSync } from 'node:fs';
import { register } from 'tsx/esm/api';

register();
process.on('exit', () => {
  if (process.env.RETARDA_MAXRSS_FILE) writeFileSync(process.env.RETARDA_MAXRSS_FILE, String(process.resourceUsage().maxRSS));
});
const args = process.argv.slice(2);
if (args[0] === '--decode-only') {
  const { loadImagePages } = await import('../../src/cli/io.ts');
  const pages = await loadImagePages(args[1]);
  process.stdout.write(`${pages.length} page(s), ${pages[0].width} x ${pages[0].height}\n`);
} else {
  const { main } = await import('../../src/cli/main.ts');
  process.exitCode = await main(args);
}
