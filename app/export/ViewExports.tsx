/** Buttons that save the current view: a PNG picture with scale bar and legend, the field as a float TIFF, and the printable report. */
import { useState } from 'react';
import { viewPicturePng, downloadBlob, type ViewPictureInput } from './viewPicture.ts';

interface Props {
  picture: ViewPictureInput | null;
  baseName: string;
  /** Writes the field TIFF; absent when no field has been made for this image. */
  fieldTiff?: () => Promise<Uint8Array>;
  onReport(): void;
  onError(message: string): void;
}

export function ViewExports(p: Props) {
  const [busy, setBusy] = useState(false);
  const run = async (what: string, f: () => Promise<void>) => {
    setBusy(true);
    try { await f(); } catch (e) { p.onError(`${what}: ${(e as Error).message}`); } finally { setBusy(false); }
  };
  return (
    <span className="group view-exports">
      Save:
      <button disabled={!p.picture || busy} title="The view as a PNG picture with a scale bar (and the colour key when orientation colours are shown)"
        onClick={() => void run('The picture could not be saved', async () => downloadBlob(`${p.baseName}-view.png`, await viewPicturePng(p.picture!)))}>picture</button>
      {p.fieldTiff && <button disabled={busy} title="Angle (deg), coherency, texture strength and mask as a 32-bit float TIFF, as --field-out writes it"
        onClick={() => void run('The field could not be saved', async () => {
          const bytes = await p.fieldTiff!();
          downloadBlob(`${p.baseName}-field.tif`, new Blob([bytes as Uint8Array<ArrayBuffer>], { type: 'image/tiff' }));
        })}>field TIFF</button>}
      <button onClick={p.onReport} title="A printable report of this session">report</button>
    </span>
  );
}
