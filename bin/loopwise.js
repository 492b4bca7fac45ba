#!/usr/bin/env node
// Launcher for the `loopwise` command: runs the TypeScript CLI through tsx's loader.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('../electron/cli.ts');
process.exitCode = await main(process.argv.slice(2));
