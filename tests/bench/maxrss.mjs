// Runs a JavaScript entry (the built command, dist/retarda.mjs) as this process and, on exit, writes the
// process's peak resident memory (process.resourceUsage().maxRSS, KiB) to the file named by
// RETARDA_MAXRSS_FILE, so the bench can give a whole run's peak memory without a tool such as time(1).
// Usage: node tests/bench/maxrss.mjs ENTRY.mjs ARG...
import { writeFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

process.on('exit', () => {
  if (process.env.RETARDA_MAXRSS_FILE) writeFileSync(process.env.RETARDA_MAXRSS_FILE, String(process.resourceUsage().maxRSS));
});
const [entry, ...rest] = process.argv.slice(2);
process.argv = [process.argv[0], resolve(entry), ...rest];
await import(pathToFileURL(resolve(entry)).href);
