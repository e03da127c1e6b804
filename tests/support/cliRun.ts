import { main } from '../../src/cli/main.ts';

/** Runs the CLI in-process and captures what it prints. */
export async function runCli(argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '', err = '';
  const sink = (add: (s: string) => void) => ({ write: (s: string) => add(s) });
  const code = await main(argv, sink((s) => (out += s)), sink((s) => (err += s)));
  return { code, out, err };
}
