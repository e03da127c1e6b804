/**
 * Defaults overlaid by the given options, skipping keys whose value is undefined (a CLI or form that
 * leaves an option out passes undefined, which must not erase the default).
 */
export function withDefaults<D extends object>(defaults: D, given: Partial<Record<keyof D, unknown>> | object = {}): D {
  const out = { ...defaults } as Record<string, unknown>;
  for (const [k, v] of Object.entries(given)) if (v !== undefined) out[k] = v;
  return out as D;
}
