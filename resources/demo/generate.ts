// Writes the demo test day (resources/demo/scenario.ts) as a session folder in the Rakeline log
// format, run by run (the generator is lazy, so large sessions never sit in memory).
//   npx tsx resources/demo/generate.ts [--out dir] [--seed n] [--runs n] [--samples n]
//                                     [--digits n] [--single-file] [--no-faults]
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Command, InvalidArgumentError } from 'commander';
import { writeSessionFolder } from '../../main/logwriter';
import { demoSession, DEMO_SEED } from './scenario';

const here = dirname(fileURLToPath(import.meta.url));

function int(name: string, min: number) {
  return (v: string): number => {
    const n = Number(v);
    if (!Number.isInteger(n) || n < min) throw new InvalidArgumentError(`${name} must be an integer ≥ ${min} (got "${v}")`);
    return n;
  };
}

const program = new Command()
  .name('generate')
  .description('Write the invented Harrowgate No. 2 tunnel test day (HAL-S4412) as a session folder.')
  .option('--out <dir>', 'output folder', join(here, 'session'))
  .option('--seed <n>', 'random seed', int('seed', 0), DEMO_SEED)
  .option('--runs <n>', 'total runs, zeros included (default: the 52-run day)', int('runs', 1))
  .option('--samples <n>', 'samples per channel per run', int('samples', 2), 200)
  .option('--digits <n>', 'significant digits of the logged values', int('digits', 3), 6)
  .option('--single-file', 'one long log with a run column instead of one file per run', false)
  .option('--no-faults', 'leave out the five planted faults');
program.parse();
const o = program.opts<{ out: string; seed: number; runs?: number; samples: number; digits: number; singleFile: boolean; faults: boolean }>();

const demo = demoSession({ seed: o.seed, runs: o.runs ?? 'day', samples: o.samples, faults: o.faults });
const out = resolve(o.out);
const t0 = Date.now();
writeSessionFolder(out, demo.setup, demo.index, demo.runs(), {
  singleFile: o.singleFile,
  digits: o.digits,
  sampleRateHz: demo.sampleRateHz,
});
const data = demo.index.filter((r) => r.kind === 'data').length;
console.log(
  `Wrote ${demo.index.length} runs (${data} data, ${demo.index.length - data} wind-off zeros), ` +
    `${demo.setup.channels.length} channels × ${o.samples} samples, to ${out} in ${((Date.now() - t0) / 1000).toFixed(1)} s.`,
);
if (demo.faults.length) {
  console.log('Planted faults:');
  for (const f of demo.faults) {
    const runs = f.scope === 'session' ? 'every data run' : `run${f.runs.length > 1 ? 's' : ''} ${f.runs.join(', ')}`;
    console.log(`  ${f.code.padEnd(18)} ${runs}`);
  }
}
