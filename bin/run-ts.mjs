#!/usr/bin/env node
// Runs a TypeScript entry file directly (tsx's loader), so scripts and the CLI need no build step.
import { register } from 'tsx/esm/api';
import { pathToFileURL } from 'node:url';
import { resolve } from 'node:path';

register();
const [entry, ...rest] = process.argv.slice(2);
process.argv = [process.argv[0], resolve(entry), ...rest];
await import(pathToFileURL(resolve(entry)).href);
