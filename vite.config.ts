import { defineConfig, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';
import { VitePWA } from 'vite-plugin-pwa';
import { fileURLToPath } from 'node:url';
import { demoImages } from './app/build/demoImages.ts';

const here = (p: string) => fileURLToPath(new URL(p, import.meta.url));

/** The analysis names of sample-images/README.md that the app offers (the `retarda` subcommand names). */
export const DEMO_ANALYSES = ['orient', 'profile', 'plate', 'plate2', 'quad', 'diameter', 'calibrate'];

/**
 * Content security policy for the built page. The page itself needs no eval; the analysis worker
 * (opencv.js) does, and a worker served from its own URL takes its policy from its own response, so
 * the page's meta tag does not restrict it. Dev mode injects inline scripts, so only the build gets it.
 */
function pagePolicy(): Plugin {
  const policy = [
    "default-src 'self'", "script-src 'self' 'wasm-unsafe-eval'", "worker-src 'self'", "style-src 'self' 'unsafe-inline'",
    "img-src 'self' blob: data:", "connect-src 'self' blob: data:", "media-src 'self' blob:", "object-src 'none'", "base-uri 'self'",
  ].join('; ');
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
