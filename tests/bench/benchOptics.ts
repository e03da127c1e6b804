/** Optics part of the benchmark; filled in as the optics readers land. */
export async function benchOptics(): Promise<void> {}
