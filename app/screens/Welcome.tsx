/** The page before any image: bring one in, or open a demo image. */
import { LampCaution, SampleCaution } from '../components/Cautions.tsx';
import type { ImageIntake } from '../images/useImageIntake.ts';

export function Welcome({ intake }: { intake: ImageIntake }) {
  return (
    <main className="welcome">
      <section className="drop-target">
        <h2>Bring in a microscope image</h2>
        <p>Drop PNG, JPEG or TIFF files here (8/16-bit, 32-bit float TIFF), <button onClick={intake.chooseFiles}>choose files…</button> or paste one with Ctrl+V.</p>
        <p className="note">Everything stays on this device. The analyses run here, without a network.</p>
        {intake.demos.length > 0 && (
          <div className="demos">
            <h3>Or try a demo image</h3>
            <ul>{intake.demos.map((d) => (
              <li key={d.file}><button onClick={() => void intake.openDemo(d)}>{d.title}</button> <span className="note">{d.about}</span>
                {d.set && d.set[d.set.length - 1] === d.file && <> <button className="small" onClick={() => void intake.openDemo(d, true)}>Open these {d.set.length} together</button></>}
              </li>
            ))}</ul>
          </div>
        )}
      </section>
      <LampCaution />
      <SampleCaution />
    </main>
  );
}
