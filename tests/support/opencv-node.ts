// Vitest (environment node) hangs on the ES import of opencv.js; a CommonJS require works.
import { createRequire } from 'node:module';

const cv = createRequire(import.meta.url)('@techstark/opencv-js');
export default cv;
