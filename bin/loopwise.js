#!/usr/bin/env node
// Launcher for the `loopwise` command: runs the TypeScript CLI through tsx's loader.
import { register } from 'tsx/esm/api';

register();
const { main, endQuietlyOnClosedPipe } = await import('../electron/cli.ts');
const argv = process.argv.slice(2);
endQuietlyOnClosedPipe(argv[0]);
process.exitCode = await main(argv);
