#!/usr/bin/env node
// Launcher for the `loopwise` command. It runs the compiled CLI in dist-node/ (bin/build-node.js;
// `npm ci` builds it) when that build matches the sources on disk, and otherwise the TypeScript
// sources through tsx's loader, so an edited source is never served from a stale build.
// LOOPWISE_FROM_SOURCE=1 always runs the sources.
import { isBuildFresh } from './build-node.js';

let main;
let endQuietlyOnClosedPipe;
if (process.env.LOOPWISE_FROM_SOURCE !== '1' && isBuildFresh()) {
  ({ main, endQuietlyOnClosedPipe } = await import('../dist-node/cli.js'));
} else {
  const { register } = await import('tsx/esm/api');
  register();
  ({ main, endQuietlyOnClosedPipe } = await import('../electron/cli.ts'));
}
const argv = process.argv.slice(2);
// A reader that stops early (`| head`) ends the command quietly instead of with an EPIPE trace.
endQuietlyOnClosedPipe(argv[0]);
process.exitCode = await main(argv);
