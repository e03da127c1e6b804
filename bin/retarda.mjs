#!/usr/bin/env node
// The `retarda` command: loads the TypeScript CLI through tsx, so `npx retarda` works right after `npm install`.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('../src/cli/main.ts');
process.exitCode = await main(process.argv.slice(2));
