import { defineConfig, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';
import { VitePWA } from 'vite-plugin-pwa';
import { fileURLToPath } from 'node:url';
import { readFileSync } from 'node:fs';
import { demoImages } from './app/build/demoImages.ts';

const here = (p: string) => fileURLToPath(new URL(p, import.meta.url));

/** The analysis names of sample-images/README.md that the app offers (the `retarda` subcommand names). */
export const DEMO_ANALYSES = ['orient', 'profile', 'plate', 'plate-pair', 'angle-series', 'diameter', 'calibrate'];

/**
 * The app's version as shown in its help: package.json's, with `RETARDA_BUILD` appended when set (a build
 * made to test updates sets it, so two builds differ).
 */
const version = JSON.parse(readFileSync(here('./package.json'), 'utf8')).version + (process.env.RETARDA_BUILD ? `+${process.env.RETARDA_BUILD}` : '');

/**
 * Content security policy of the built page (W3C Content Security Policy Level 3): scripts and styles only
 * from the app's own files, no inline script or style, no eval, nothing from other sites. React sets element
 * styles through the DOM (CSSOM), which the policy allows. The page itself compiles no WebAssembly. The
 * analysis worker (opencv.js calls `new Function` while it starts) is served from its own URL, so it takes its
 * policy from its own response, not from this tag. Dev mode injects inline scripts, so only the build gets it.
 */
export const PAGE_POLICY = [
  "default-src 'self'", "script-src 'self'", "worker-src 'self'", "style-src 'self'",
  "img-src 'self' blob: data:", "connect-src 'self' blob: data:", "media-src 'self' blob:", "font-src 'self'",
  "object-src 'none'", "base-uri 'self'", "form-action 'none'",
].join('; ');

function pagePolicy(): Plugin {
  const policy = PAGE_POLICY;
  return {
    name: 'retarda-page-policy',
    apply: 'build',
    transformIndexHtml: (html) => html.replace('<head>', `<head>\n    <meta http-equiv="Content-Security-Policy" content="${policy}">`),
  };
}

export default defineConfig({
  root: here('./app'),
  publicDir: here('./public'),
  base: './',
  build: {
    outDir: here('./dist'),
    emptyOutDir: true,
    target: 'es2022',
    chunkSizeWarningLimit: 12_000,
  },
  worker: { format: 'es' },
  define: { __RETARDA_VERSION__: JSON.stringify(version) },
  optimizeDeps: { include: ['@techstark/opencv-js', 'fast-png', 'jpeg-js', 'tiff'] },
  server: { fs: { allow: [here('.')] } },
  plugins: [
    react(),
    pagePolicy(),
    // Analyses the app offers: every sample image in sample-images/ is offered with the one it is for.
    demoImages(here('./sample-images'), DEMO_ANALYSES),
    VitePWA({
      strategies: 'generateSW',
      injectRegister: false,
      registerType: 'prompt',
      manifest: false,
      workbox: {
        // The opencv.js worker chunk is about 11 MB; precache it with the shell so the first offline use works.
        maximumFileSizeToCacheInBytes: 32 * 1024 * 1024,
        globPatterns: ['**/*.{js,css,html,svg,png,webmanifest,json,tif,tiff,jpg}'],
        navigateFallback: 'index.html',
        cleanupOutdatedCaches: true,
      },
    }),
  ],
});
