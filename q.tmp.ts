import { demoSession } from './resources/demo/scenario';
import { reduceRawSession } from './app/reduce';
const d = demoSession({});
const raws = [...d.runs()].filter(r=>[9,10,27,28,8,7].includes(r.info.run));
const { results } = reduceRawSession(d.setup, raws, { mcDraws: 0 });
for (const r of results) {
  const s = r.corrections!.signature!;
  console.log(r.run, r.uncorrected.alphaDeg, 'ws sb', s.epsSb.toFixed(5), 'wb', s.epsWb.toFixed(5), 'off', s.offset.toFixed(5), 'grad', s.gradient.toFixed(5), 'Q/(hV)', (s.Q/(0.9*r.uncorrected.V)).toFixed(5), 'mu/(h2V)', (s.mu/(0.81*r.uncorrected.V)).toFixed(6), 'cl', r.uncorrected.cl.toFixed(3), 'clws', (2*s.gamma/(r.uncorrected.V*0.25)).toFixed(3));
  const up = r.taps.filter(t=>t.row==='C'&&t.surface==='upper').sort((a,b)=>b.x-a.x).map(t=>`${t.x.toFixed(2)}:${t.cp.toFixed(2)}`);
  console.log(up.join(' '));
}
console.log('expected eps_sb', Math.PI**2*(0.0817*0.0625*1.12/(2*Math.PI))/(3*0.81));
