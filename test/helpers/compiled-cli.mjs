// `node compiled-cli.mjs DIST ARGS…`: the command line as bin/rakeline.mjs starts it (scripts/
// compiled.mjs loadCli, the CommonJS build through V8's code cache), from the builds in DIST; says
// on stderr, last line, what became of the cache ("cache: none|used|rejected").
import { loadCli } from '../../scripts/compiled.mjs';

const [dist, ...args] = process.argv.slice(2);
const { cli, cache, keep } = await loadCli({ argv: args, dist });
process.exitCode = await cli.main([process.argv[0], 'rakeline', ...args]);
keep();
process.stderr.write(`cache: ${cache}\n`);
