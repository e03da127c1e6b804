/**
 * Bad input or options: the user can fix it. The CLI maps it to exit status 2 and prints the message
 * on one line; the app shows it in plain words. `hint` says what to do about it.
 */
export class InputError extends Error {
  readonly hint: string;
  constructor(message: string, hint = '') {
    super(hint ? `${message}. ${hint}` : message);
    this.name = 'InputError';
    this.hint = hint;
  }
}

export function isInputError(e: unknown): e is InputError {
  return e instanceof InputError || (e instanceof Error && e.name === 'InputError');
}

/** Throws an InputError unless `value` is a finite number inside [min, max]. */
export function checkNumber(name: string, value: number, min: number, max: number, unit = ''): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value < min || value > max) {
    const u = unit ? ` ${unit}` : '';
    throw new InputError(`${name} must be a number from ${min} to ${max}${u}, got ${String(value)}`,
      `Give ${name} a value in that range`);
  }
  return value;
}
