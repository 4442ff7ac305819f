#!/usr/bin/env node
// Launcher of the `rakeline` command line. It runs the compiled JavaScript in dist/node (built by
// `npm install`; rebuilt here first when a source changed, see scripts/compiled.mjs), through V8's
// code cache kept beside it (loadCli), so no compiler runs at start-up and little is parsed.
// RAKELINE_FROM_SOURCES=1 runs the TypeScript sources through tsx instead (development). The exit
// code is set by the CLI (0 ok, 1 bad input, 2 usage).
import { loadCli } from '../scripts/compiled.mjs';

const { cli, keep } = await loadCli();
process.exitCode = await cli.main(process.argv);
keep();
