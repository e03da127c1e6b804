import type { channelScene } from './make-samples.ts';

/** Plate images are rendered once the optics forward model is in place. */
export async function renderPlateImages(_scene: ReturnType<typeof channelScene>, _dir: string): Promise<void> {}
