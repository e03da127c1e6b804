import { describe, expect, it, vi } from 'vitest';

// The image loader is replaced by one that throws what a bug or a full memory would throw, so the
// CLI's top level can be seen turning it into its one plain line (README, "Command line").
const thrown = vi.hoisted(() => ({ error: new Error('unset') as Error }));
vi.mock('../../src/cli/io.ts', async (original) => ({
  ...(await original<typeof import('../../src/cli/io.ts')>()),
  loadImageFiles: async () => { throw thrown.error; },
  loadGreyImageOrRows: async () => { throw thrown.error; },
}));
const { main, FAULT_LINE } = await import('../../src/cli/main.ts');

async function run(error: Error) {
  thrown.error = error;
  let out = '';
  let err = '';
  const code = await main(['orient', 'any.png'], { write: (s) => { out += s; } }, { write: (s) => { err += s; } });
  return { code, out, err };
}

describe('faults and running out of memory at the top level of the CLI', () => {
  it('a bug (TypeError) is exit 1 with one line saying it is a bug, where to report it and what to attach, and no error text', async () => {
    const r = await run(new TypeError("Cannot read properties of undefined (reading 'width')"));
    expect(r.code).toBe(1);
    expect(r.err).toBe(`retarda orient: ${FAULT_LINE}\n`);
    expect(r.err).not.toMatch(/TypeError|undefined|Cannot read/);
    for (const words of ['bug', 'report it on the Retarda issue list', 'command line', 'input files', 'RETARDA_DEBUG=1']) {
      expect(r.err).toContain(words);
    }
  });

  it('a failed buffer allocation is exit 2 with one line saying what to do', async () => {
    const r = await run(new RangeError('Array buffer allocation failed'));
    expect(r.code).toBe(2);
    expect(r.err.split('\n').filter(Boolean)).toHaveLength(1);
    expect(r.err).toContain('not enough memory');
    expect(r.err).not.toContain('RangeError');
  });

  it('any other RangeError (e.g. an engine limit hit by a bug) is a fault, not bad input', async () => {
    const r = await run(new RangeError('Invalid typed array length: -1'));
    expect(r.code).toBe(1);
    expect(r.err).not.toContain('Invalid typed array length');
  });
});
