/** The structure tensor's WebAssembly SIMD kernel (tensorKernel.as.ts, compiled into tensorKernel.wasm.ts by `npm run wasm`). */
export type { KernelExports } from './tensorKernel.ts';
export { loadTensorKernel, loadedTensorKernel, KernelArena } from './tensorKernel.ts';
