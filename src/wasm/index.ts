/** The structure tensor's WebAssembly SIMD kernel (tensorKernel.as.ts, compiled into tensorKernel.wasm.ts by `npm run wasm`). */
export type { KernelExports } from './tensorKernel.ts';
export { loadTensorKernel, loadedTensorKernel, KernelArena } from './tensorKernel.ts';
/** The optical readings' per-pixel kernel (opticsKernel.as.ts, compiled into opticsKernel.wasm.ts by `npm run wasm`). */
export type { OpticsKernelExports } from './opticsKernel.ts';
export { opticsKernel, OpticsLayout, decodeTableIn } from './opticsKernel.ts';
