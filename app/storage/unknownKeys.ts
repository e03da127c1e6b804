/**
 * Stored records may carry fields written by a newer copy of the app. Restore keeps every key it does
 * not know, as it was, beside the fields it checked, so an older copy never drops them when it saves.
 */

/** Every key of T, listed once; the Record type makes the compiler name a key added to T but missing here. */
export const keySet = <T>(keys: Record<keyof T, true>): ReadonlySet<string> => new Set(Object.keys(keys));

/** The entries of `raw` whose keys are not in `known`, values as they were. */
export function unknownKeys(raw: Record<string, unknown>, known: ReadonlySet<string>): Record<string, unknown> {
  return Object.fromEntries(Object.entries(raw).filter(([k]) => !known.has(k)));
}

/** `checked` with the keys of `raw` that `known` does not list put back beside it (the checked fields win). */
export function withUnknown<T extends object>(raw: unknown, known: ReadonlySet<string>, checked: T): T {
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return checked;
  return { ...unknownKeys(raw as Record<string, unknown>, known), ...checked } as T;
}
