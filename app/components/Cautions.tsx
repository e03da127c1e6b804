/** Short safety reminders shown where they matter. They point to the lab's own rules, which come first. */
export function LampCaution() {
  return (
    <p className="caution" role="note">
      <strong>Bench safety.</strong> Lamp housings get hot and arc lamps emit UV: let them cool, keep the filters in place, never look into the beam.
      Turn the light down before switching from the camera to the eyepieces. Your lab's safety rules come first.
    </p>
  );
}

export function SampleCaution() {
  return (
    <p className="caution" role="note">
      <strong>Samples.</strong> Spinning dopes and their solvents (strong acids, DMF, NMP, DMSO) can burn or pass through skin:
      gloves, eye protection and a fume hood as the safety data sheet and your lab's rules say. Slides and coverslips go in the sharps bin.
    </p>
  );
}

export function ResultCaution() {
  return (
    <p className="caution subtle" role="note">
      These are image analyses, not a certified measurement: report them with the settings, the calibration state and the intervals.
    </p>
  );
}
