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

export interface DemoWriteOptions { seed: number; runs?: number; samples: number; digits: number; singleFile: boolean; faults: boolean }
export const DEMO_WRITE_DEFAULTS: DemoWriteOptions = { seed: DEMO_SEED, samples: 200, digits: 6, singleFile: false, faults: true };

/** Write the demo session folder to `out`; resolves the summary lines `npm run demo` prints. Also
 *  used by browser mode when the bundled demo folder is missing (main/serve.ts). */
export function writeDemoSession(out: string, o: DemoWriteOptions = DEMO_WRITE_DEFAULTS): string[] {
  const demo = demoSession({ seed: o.seed, runs: o.runs ?? 'day', samples: o.samples, faults: o.faults });
  const t0 = Date.now();
  writeSessionFolder(out, demo.setup, demo.index, demo.runs(), {
    singleFile: o.singleFile,
    digits: o.digits,
    sampleRateHz: demo.sampleRateHz,
  });
  const data = demo.index.filter((r) => r.kind === 'data').length;
  const lines = [
    `Wrote ${demo.index.length} runs (${data} data, ${demo.index.length - data} wind-off zeros), ` +
      `${demo.setup.channels.length} channels × ${o.samples} samples, to ${out} in ${((Date.now() - t0) / 1000).toFixed(1)} s.`,
  ];
  if (demo.faults.length) {
    lines.push('Planted faults:');
    for (const f of demo.faults) {
      const runs = f.scope === 'session' ? 'every data run' : `run${f.runs.length > 1 ? 's' : ''} ${f.runs.join(', ')}`;
      lines.push(`  ${f.code.padEnd(18)} ${runs}`);
    }
  }
  return lines;
}

function cli(): void {
  const d = DEMO_WRITE_DEFAULTS;
  const program = new Command()
    .name('generate')
    .description('Write the invented Harrowgate No. 2 tunnel test day (HAL-S4412) as a session folder.')
    .option('--out <dir>', 'output folder', join(here, 'session'))
    .option('--seed <n>', 'random seed', int('seed', 0), d.seed)
    .option('--runs <n>', 'total runs, zeros included (default: the 52-run day)', int('runs', 1))
    .option('--samples <n>', 'samples per channel per run', int('samples', 2), d.samples)
    .option('--digits <n>', 'significant digits of the logged values', int('digits', 3), d.digits)
    .option('--single-file', 'one long log with a run column instead of one file per run', d.singleFile)
    .option('--no-faults', 'leave out the five planted faults');
  program.parse();
  const o = program.opts<DemoWriteOptions & { out: string }>();
  for (const l of writeDemoSession(resolve(o.out), o)) console.log(l);
}

if (process.argv[1] && resolve(process.argv[1]).replace(/\.ts$/, '') === fileURLToPath(import.meta.url).replace(/\.ts$/, '')) cli();
