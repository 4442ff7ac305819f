import { demoSession } from './resources/demo/scenario';
import { reduceRawSession } from './app/reduce';
const d = demoSession({});
const raws = [...d.runs()];
const { results } = reduceRawSession(d.setup, raws, { mcDraws: 0 });
for (const r of results) {
  const c = r.corrections!;
  const m = Object.fromEntries(c.methods.map((x) => [x.method, x.available ? `${x.eps!.toFixed(4)}/${x.dAlphaDeg!.toFixed(2)}/${x.corrected!.cl.toFixed(3)}` : 'n/a']));
  console.log(r.run, r.uncorrected.alphaDeg, c.applied, 'te', c.teCp.toFixed(2), 'res', c.signature?.residualCp.toFixed(4), 'ws', m['wall-signature'], 'mk', m.maskell, 'brp', m['barlow-rae-pope'], r.flags.map(f=>f.code).join(','));
}
