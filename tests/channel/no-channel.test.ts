// The wall finder on photographs that hold no channel: it must refuse in one plain line rather than hand
// back two walls (a profile between them would be numbers about nothing). Images: scikit-image's sample
// data (Debian python3-skimage, installed by .ci/run), none of which shows a channel between two walls.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { findWalls } from '../../src/channel/index.ts';
import { InputError } from '../../src/common/index.ts';
import { loadImageFiles } from '../../src/cli/io.ts';

const PY = '/usr/bin/python3';
const dataDir = existsSync(PY)
  ? execFileSync(PY, ['-c', 'import os, skimage.data; print(os.path.dirname(skimage.data.__file__))'], { encoding: 'utf8' }).trim()
  : '';

describe.skipIf(!dataDir)('findWalls on photographs with no channel', () => {
  // camera: a man with a tripod; chessboard: squares; astronaut: a portrait; cell: a cell in phase contrast;
  // rocket: a launch; clock_motion: a motion-blurred clock; moon: a lunar surface; text: handwritten text on a
  // street sign; coins: old coins on a plain ground; hubble_deep_field: galaxies on a dark sky; ihc: a stained
  // tissue section; bw_text: printed black text; phantom: a simulated head cross-section. The last six have
  // straight, parallel edges the strips agree on, but as much texture beyond them as between them.
  for (const name of [
    'camera.png', 'chessboard_GRAY.png', 'astronaut.png', 'cell.png', 'rocket.jpg', 'clock_motion.png', 'moon.png',
    'text.png', 'coins.png', 'hubble_deep_field.jpg', 'ihc.png', 'bw_text.png', 'phantom.png',
  ]) {
    it(`refuses ${name} in one plain line`, async () => {
      const [img] = await loadImageFiles([join(dataDir, name)]);
      const err = await findWalls(img).then(() => null, (e: unknown) => e);
      expect(err).toBeInstanceOf(InputError);
      const message = (err as InputError).message;
      expect(message).toMatch(/wall/);
      expect(message).not.toMatch(/\n|TypeError|RangeError|undefined/);
    });
  }
});
