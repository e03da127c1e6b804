/** opencv.js, loaded in one place (opencv.ts says why its module object is never awaited). */
export type { CV } from './opencv.ts';
export { loadCv, cvError } from './opencv.ts';
