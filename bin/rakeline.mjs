#!/usr/bin/env node
// Launcher of the `rakeline` command line: registers tsx so the TypeScript sources run as they are,
// then hands over to main/cli.ts. The exit code is set by the CLI (0 ok, 1 bad input, 2 usage).
import { register } from 'tsx/esm/api';

register();
const { main } = await import(new URL('../main/cli.ts', import.meta.url).href);
process.exitCode = await main(process.argv);
