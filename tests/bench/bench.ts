/**
 * npm run bench: speed and memory of the texture pipeline (orientation field + channel profile) at
 * 12 MP and 1280x720, and, when Debian's python3-opencv is present, the ratio to native OpenCV doing
 * the same pipeline on the same pixels in the same run. Figures are printed, never asserted.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { orientationField } from '../../src/orientation/index.ts';
import { channelProfile, parseWalls } from '../../src/channel/index.ts';
import { loadCv } from '../../src/cv/opencv.ts';
import { benchOptics } from './benchOptics.ts';

const SIGMA = 2, SIGMA_D = 1, REPEATS = 3;

function scene(width: number, height: number): Float32Array {
  // Deterministic texture: stripes whose angle changes across the height, plus hash noise.
  const d = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    const a = 0.5 * Math.sin((Math.PI * y) / height);
    const ca = Math.cos(a), sa = Math.sin(a);
    for (let x = 0; x < width; x++) {
      const h = Math.imul(x * 374761393 + y * 668265263, 1274126177) >>> 0;
      d[y * width + x] = 0.5 + 0.3 * Math.sin((2 * Math.PI * (-x * sa + y * ca)) / 7) + 0.05 * (h / 4294967296 - 0.5);
    }
  }
  return d;
}

async function jsPipeline(width: number, height: number, data: Float32Array) {
  const plane = { width, height, data };
  const walls = parseWalls(`0,${0.1 * height},${width - 1},${0.1 * height};0,${0.9 * height},${width - 1},${0.9 * height}`);
  let bestT = Infinity, bestP = Infinity, heap = 0;
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    const field = await orientationField(plane, { sigmaPx: SIGMA, sigmaDerivPx: SIGMA_D });
    const t1 = performance.now();
    channelProfile(field, walls, { bins: 20 });
    const t2 = performance.now();
    bestT = Math.min(bestT, (t1 - t0) / 1000);
    bestP = Math.min(bestP, (t2 - t1) / 1000);
    heap = Math.max(heap, process.memoryUsage().rss);
  }
  return { tensorS: bestT, profileS: bestP, rssMiB: heap / 2 ** 20, wasmMiB: await wasmHeapMiB() };
}

function nativePipeline(width: number, height: number, data: Float32Array): { tensorS: number; profileS: number } | null {
  const py = '/usr/bin/python3';
  if (!existsSync(py)) return null;
  try {
    execFileSync(py, ['-c', 'import cv2'], { stdio: 'ignore' });
  } catch {
    return null;
  }
  const dir = mkdtempSync(join(tmpdir(), 'retarda-bench-'));
  try {
    const raw = join(dir, 'img.f32');
    writeFileSync(raw, new Uint8Array(data.buffer, data.byteOffset, data.byteLength));
    const out = execFileSync(py, [new URL('./native_pipeline.py', import.meta.url).pathname, raw, String(width), String(height), String(SIGMA), String(SIGMA_D), String(REPEATS)], {
      env: { ...process.env, OMP_NUM_THREADS: '1', OPENCV_FOR_THREADS_NUM: '1' },
      encoding: 'utf8',
    });
    return JSON.parse(out.trim().split('\n').pop()!);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Size of opencv.js's WASM heap: it grows to the largest tile pipeline and never shrinks. */
async function wasmHeapMiB(): Promise<number> {
  const cv = (await loadCv()) as unknown as { HEAP8: Int8Array };
  return cv.HEAP8.length / 2 ** 20;
}

const fmt = (s: number) => (s < 1 ? `${(s * 1000).toFixed(1)} ms` : `${s.toFixed(2)} s`);

async function main() {
  const t0 = performance.now();
  await loadCv();
  console.log(`opencv.js start-up: ${fmt((performance.now() - t0) / 1000)}`);
  console.log('texture pipeline: structure tensor (sigma 2, Gaussian derivatives sigma 1) + orientation + coherency, then a 20-bin channel profile');
  // RETARDA_BENCH_BIG=1 adds a 100-megapixel image: tiles keep the WASM heap at the size of one tile.
  const sizes = [[4000, 3000], [1280, 720], ...(process.env.RETARDA_BENCH_BIG ? [[10000, 10000]] : [])];
  for (const [w, h] of sizes) {
    const data = scene(w, h);
    const js = await jsPipeline(w, h, data);
    const nat = nativePipeline(w, h, data);
    console.log(`\n${w}x${h} (${((w * h) / 1e6).toFixed(1)} MP)`);
    console.log(`  retarda  field ${fmt(js.tensorS)}  profile ${fmt(js.profileS)}  total ${fmt(js.tensorS + js.profileS)}  peak RSS ${js.rssMiB.toFixed(0)} MiB  WASM heap ${js.wasmMiB.toFixed(0)} MiB`);
    if (nat) {
      console.log(`  native   field ${fmt(nat.tensorS)}  profile ${fmt(nat.profileS)}  total ${fmt(nat.tensorS + nat.profileS)}  (python3-opencv, 1 thread)`);
      console.log(`  ratio    field ${(js.tensorS / nat.tensorS).toFixed(2)}x  total ${((js.tensorS + js.profileS) / (nat.tensorS + nat.profileS)).toFixed(2)}x`);
    } else {
      console.log('  native   (python3-opencv not installed: apt-get install -y python3-opencv for the ratio)');
    }
  }
  await benchOptics();
}

await main();
