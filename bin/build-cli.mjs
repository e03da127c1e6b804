#!/usr/bin/env node
// Compiles the `retarda` command (src/cli) into one JavaScript file, dist/retarda.mjs, which package.json's
// `bin` names. Run by `npm install` (the `prepare` script) and `npm run build:cli`: no TypeScript is
// transpiled when the command starts, and one bundled file loads in a few milliseconds where some
// hundred modules took most of the start-up. Plain JavaScript, so it runs before anything is built.
import { build } from 'esbuild';
import { chmodSync, mkdirSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
export const CLI_OUT = resolve(ROOT, 'dist/retarda.mjs');

/** Bundles src/cli/main.ts and a short entry into `outfile`, CLI_OUT by default (about 0.2 s). */
export async function buildCli(outfile = CLI_OUT) {
  await build({
    stdin: {
      // The same file runs as the command's worker threads (src/cli/threads.ts).
      contents: "import { main } from './src/cli/main.ts';\nimport { isStripWorker, serveStrips } from './src/cli/threads.ts';\n"
        + "if (isStripWorker()) serveStrips();\nelse process.exitCode = await main(process.argv.slice(2));\n",
      resolveDir: ROOT,
      sourcefile: 'retarda-entry.ts',
      loader: 'ts',
    },
    outfile,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    banner: { js: '#!/usr/bin/env node\n// Built by bin/build-cli.mjs from src/cli: do not edit, run `npm run build:cli`.' },
    logLevel: 'warning',
    legalComments: 'none',
  });
  chmodSync(outfile, 0o755);
}

/**
 * A command that only says it could not be built (exit 1). `npm install` goes on when the sources do not
 * compile, so the tests (which run the sources through tsx) can still say what is wrong.
 */
function writeUnbuilt(why) {
  mkdirSync(dirname(CLI_OUT), { recursive: true });
  const line = `retarda: this copy of the command could not be built (${why}). Fix the sources, then run npm run build:cli`;
  writeFileSync(CLI_OUT, `#!/usr/bin/env node\nprocess.stderr.write(${JSON.stringify(line + '\n')});\nprocess.exitCode = 1;\n`);
  chmodSync(CLI_OUT, 0o755);
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  try {
    await buildCli();
  } catch (e) {
    const first = e?.errors?.[0];
    const why = first ? `${first.location?.file ?? ''}:${first.location?.line ?? ''} ${first.text}` : String(e?.message ?? e);
    writeUnbuilt(why);
    console.error(`bin/build-cli.mjs: the retarda command was not built: ${why}`);
    process.exitCode = process.env.npm_lifecycle_event === 'prepare' ? 0 : 1;
  }
}
