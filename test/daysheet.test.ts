// The printable day sheet: content, print CSS, self-containment and escaping.
// Parsed with happy-dom so the checks look at the document structure, not at substrings only.
import { describe, expect, it } from 'vitest';
import { Window } from 'happy-dom';
import { daySheetHtml, dragAxis, fmt, intervalReach, localTime, personName, runRanges, runsWord, settingsDifferences } from '../main/daysheet';
import { escapeHtml, niceStep, niceTicks, svgPlot } from '../main/svgplot';
import type { RunResult } from '../app/types';
import { fixtureRuns, fixtureSession, fixtureSetup, fixtureSummary, LIFT_FLAG, UNSTEADY_FLAG } from './helpers/sheetFixture';

function sheet(over: { title?: string; operators?: string[]; paper?: 'A4' | 'Letter'; notes?: string } = {}, runs = fixtureRuns()) {
  const setup = fixtureSetup({ ...(over.operators ? { operators: over.operators } : {}), ...(over.notes ? { notes: over.notes } : {}) });
  const html = daySheetHtml({
    session: fixtureSession(over.title), setup, runs, summary: fixtureSummary(runs), paper: over.paper ?? 'A4',
    generatedAt: '2026-11-18T18:00:00Z', timeZone: 'UTC',
  });
  const win = new Window();
  win.document.write(html);
  return { html, doc: win.document };
}

describe('day sheet', () => {
  it('is one self-contained document: no scripts, no remote or external resources, a strict CSP', () => {
    const { html, doc } = sheet();
    expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(doc.querySelectorAll('script').length).toBe(0);
    expect(doc.querySelectorAll('link, img, iframe, object, embed').length).toBe(0);
    expect(html).not.toMatch(/https?:|\/\/[a-z]|\bsrc\s*=|url\(/i);
    const csp = doc.querySelector('meta[http-equiv="Content-Security-Policy"]');
    expect(csp?.getAttribute('content')).toContain("default-src 'none'");
    expect(csp?.getAttribute('content')).not.toContain('script-src');
  });

  it('header names facility, model, chord/span, date, operators and the conditions ranges', () => {
    const { doc } = sheet();
    const facts = doc.querySelector('dl.facts')!.textContent!;
    expect(facts).toContain('Harrowgate Aeronautical Laboratory, No. 2 low-speed tunnel');
    expect(facts).toContain('HAL-S4412');
    expect(facts).toContain('NACA 4412');
    expect(facts).toContain('0.250 m / 0.600 m');
    expect(facts).toContain('2026-11-18');
    expect(facts).toContain('M. Okonkwo, T. Lindqvist');
    expect(facts).toContain('508.1 to 515.9'); // q, Pa
    expect(facts).toContain('0.505 to 0.518'); // Re / 1e6
    expect(facts).toContain('14.0 to 14.6'); // °C
    expect(facts).toContain('1008.2 to 1008.7'); // hPa
  });

  it('run table has one row per run with both lift methods, both drags, cm, Γ and flags in words', () => {
    const { doc } = sheet();
    const table = doc.querySelector('table.runs')!;
    const heads = [...table.querySelectorAll('thead th')].map((th) => th.textContent!.replace(/\u00ad/g, ''));
    expect(heads.join('|')).toMatch(/cl\s*pressure.*cl\s*momentum.*cd\s*wake.*cd\s*pressure.*cm\s*c\/4.*Γ\s*pressure.*Γ\s*momentum/);
    const rows = [...table.querySelectorAll('tbody tr:not(.note)')];
    expect(rows.length).toBe(4);
    const byRun = (n: number) => rows.find((r) => r.querySelector('td')!.textContent!.replace(/[^0-9]/g, '') === String(n))!;
    const r4 = byRun(4).textContent!;
    expect(r4).toContain('1.3120');
    expect(r4).toContain('1.2050');
    expect(r4).toContain('0.01633');
    expect(r4).toContain('\u22120.0744'); // typographic minus
    expect(r4).toContain('hold: lift mismatch');
    expect(r4).toContain('rejected by T. Lindqvist');
    expect(byRun(3).textContent).toContain('check: unsteady q');
    expect(byRun(2).textContent).toContain('no flags');
    expect(byRun(1).textContent).toContain('wind-off zero');
    // the severity is in the text AND mirrored by a row class and a mark, never colour alone
    expect(byRun(4).className).toContain('sev-reject');
    expect(byRun(4).querySelector('td')!.textContent).toContain('✖');
    expect(byRun(3).querySelector('td')!.textContent).toContain('▲');
  });

  it('lists every flagged run with its reasons in words, and the reviewer decision', () => {
    const { doc } = sheet();
    const list = doc.querySelector('ol.flagged')!.textContent!;
    expect(list).toContain('Run 3');
    expect(list).toContain(UNSTEADY_FLAG.reason);
    expect(list).toContain('Run 4');
    expect(list).toContain(LIFT_FLAG.reason);
    expect(list).toContain('stall cell seen on tufts');
    expect(list).not.toContain('Run 2');
  });

  it('has the caution paragraph and sign-off lines for name, signature and date', () => {
    const { doc } = sheet();
    const caution = doc.querySelector('.caution')!.textContent!.replace(/\s+/g, ' ');
    expect(caution).toContain('qualified engineer');
    expect(caution).toContain('design');
    expect(caution).toContain('safety rules');
    const lines = [...doc.querySelectorAll('.signoff div')];
    expect(lines.map((d) => d.querySelector('b')!.textContent)).toContain('Reviewer');
    for (const d of lines) {
      expect([...d.querySelectorAll('span.line')].map((s) => s.textContent)).toEqual(['Name', 'Signature', 'Date']);
    }
  });

  it('draws four polars as inline SVG; flagged points are marked by shape, with legend entries', () => {
    const { doc } = sheet();
    const svgs = [...doc.querySelectorAll('.plots svg')];
    expect(svgs.map((s) => s.querySelector('title')!.textContent)).toEqual(['Lift curve cl(α)', 'Drag polar cd(cl)', 'Pitching moment cm(α)', 'Wake drag cd(α)']);
    const lift = svgs[0];
    // 3 data runs, all on the up-sweep → 3 filled circles (pressure) and 3 filled, larger squares
    // (momentum, drawn first so the circles stay on top)
    expect(lift.querySelectorAll('g.series-circle circle').length).toBe(3);
    expect(lift.querySelectorAll('g.series-square rect:not([fill="white"])').length).toBe(3);
    const order = [...lift.querySelectorAll('g[class^="series-"]')].map((g) => g.getAttribute('class'));
    expect(order).toEqual(['series-square', 'series-circle']);
    // run 4 has a hold flag: a × on each of the two series, labelled once
    expect(lift.querySelectorAll('g.flag-reject path').length).toBe(2);
    expect([...lift.querySelectorAll('g.flag-reject text')].map((t) => t.textContent)).toEqual(['r4']);
    // run 3 has check flags only: a ring on each series
    expect(lift.querySelectorAll('g.flag-check circle').length).toBe(2);
    const legend = lift.querySelector('g.legend')!.textContent!;
    expect(legend).toContain('cl from surface pressures');
    expect(legend).toContain('cl from wall momentum');
    expect(legend).toContain('hold flag');
    expect(legend).toContain('check flag of its own');
  });

  it('draws 95 % bars on cl (both lift methods) and on wake cd, each at value ± its half-width', () => {
    // Invented intervals of known half-width; the sheet takes them from the full results.
    const runs = fixtureRuns();
    const summary = fixtureSummary(runs);
    const half = { cl: 0.012, clMom: 0.02, cd: 0.0004 };
    const results = summary.polar.map((q) => ({
      run: q.run,
      correction: { method: 'barlow-rae-pope', sigma: 0.0159, epsSb: 0.004, epsWb: 0.001, eps: 0.005 },
      corrections: { requested: 'auto', applied: 'barlow-rae-pope', reason: 'test', methods: [], signature: null, teCp: 0.1, maskellDrag: { cd: 0.01, source: 'pressure' } },
      uncertainty: {
        cl: { value: q.cl, u: half.cl / 1.96, lo: q.cl - half.cl, hi: q.cl + half.cl },
        clMom: { value: q.clMom, u: half.clMom / 1.96, lo: q.clMom - half.clMom, hi: q.clMom + half.clMom },
        cd: { value: q.cd, u: half.cd / 1.96, lo: q.cd - half.cd, hi: q.cd + half.cd },
      },
    })) as unknown as RunResult[];
    const win = new Window();
    win.document.write(daySheetHtml({
      session: fixtureSession(), setup: fixtureSetup(), runs, summary, paper: 'A4', generatedAt: '2026-11-18T18:00:00Z', timeZone: 'UTC', results,
    }));
    const [lift, drag] = [...win.document.querySelectorAll('.plots svg')];
    const num = (el: { getAttribute(a: string): string | null }, a: string) => Number(el.getAttribute(a));
    // The plot's y scale from two pressure-cl markers (circles, up-sweep, in polar order).
    const circles = [...lift.querySelectorAll('g.series-circle circle')];
    expect(circles.length).toBe(summary.polar.length);
    const [p0, p1] = [summary.polar[0], summary.polar[1]];
    const k = (num(circles[1], 'cy') - num(circles[0], 'cy')) / (p1.cl - p0.cl);
    const py = (v: number) => num(circles[0], 'cy') + k * (v - p0.cl);
    // One bar path per series: momentum squares first, then pressure circles; each bar "Mx,aVb".
    const bars = [...lift.querySelectorAll('path.ubar')].map((el) => [...el.getAttribute('d')!.matchAll(/M([-\d.]+),([-\d.]+)V([-\d.]+)/g)].map((m) => m.slice(1).map(Number)));
    expect(bars.length).toBe(2);
    // Readable in print: a 0.6 pt stroke in the series colour, with end caps (one "h" per end).
    for (const el of lift.querySelectorAll('path.ubar')) {
      expect(Number(el.getAttribute('stroke-width'))).toBeGreaterThanOrEqual(0.5);
      expect(el.getAttribute('d')!.match(/h/g)!.length).toBe(2 * summary.polar.length);
    }
    summary.polar.forEach((q, i) => {
      for (const [series, v, h] of [[0, q.clMom, half.clMom], [1, q.cl, half.cl]] as const) {
        const [x, a, b] = bars[series][i];
        expect(x).toBeCloseTo(num(circles[i], 'cx'), 0);
        expect(a).toBeCloseTo(py(v - h), 0); // f1 rounds to 0.1 pt
        expect(b).toBeCloseTo(py(v + h), 0);
      }
    });
    // Drag polar: horizontal bars on wake cd, "Ma,yHb", at cd ± half-width on the x scale of the diamonds.
    const dBars = [...drag.querySelector('path.ubar')!.getAttribute('d')!.matchAll(/M([-\d.]+),([-\d.]+)H([-\d.]+)/g)].map((m) => m.slice(1).map(Number));
    // Run 4 (hold flag) lies beyond the drag axis (set by the runs without one): an off-scale mark, no bar.
    const onAxis = summary.polar.filter((q) => q.run !== 4);
    expect(onAxis.length).toBeLessThan(summary.polar.length);
    expect(drag.querySelector('g.offscale')).not.toBeNull();
    expect(dBars.length).toBe(onAxis.length);
    const mid = dBars.map(([a, , b]) => (a + b) / 2);
    const [d0, d1] = onAxis;
    const kx = (mid[1] - mid[0]) / (d1.cd - d0.cd);
    onAxis.forEach((q, i) => {
      const [a, , b] = dBars[i];
      expect(mid[i]).toBeCloseTo(mid[0] + kx * (q.cd - d0.cd), 0);
      expect(b - a).toBeCloseTo(kx * 2 * half.cd, 0);
    });
    // Without results the sheet draws no bars.
    expect(sheet().doc.querySelectorAll('path.ubar').length).toBe(0);
  });

  it('prints how far each interval reaches from the value: ± when both sides print alike, else + over −', () => {
    // Our own presentation rule (no source): the tap-resolution error is estimated with its sign
    // and not applied, so an interval may reach further on one side (docs/UNCERTAINTY.md).
    expect(intervalReach({ value: 0.5, u: 0.005, lo: 0.49, hi: 0.51 }, 0.5, 4)).toBe('<span class="u">±0.0100</span>');
    expect(intervalReach({ value: 0.5, u: 0.005, lo: 0.497, hi: 0.515 }, 0.5, 4)).toBe('<span class="u">+0.0150</span><span class="u">−0.0030</span>');
    expect(intervalReach({ value: 0.5, u: NaN, lo: NaN, hi: NaN }, 0.5, 4)).toBe('');
    // In the run table: an asymmetric cl interval shows both reaches, about the printed cl.
    const runs = fixtureRuns();
    const summary = fixtureSummary(runs);
    const q = summary.polar[0];
    const results = [{
      run: q.run,
      correction: { method: 'barlow-rae-pope', sigma: 0.0159, epsSb: 0.004, epsWb: 0.001, eps: 0.005 },
      corrections: { requested: 'auto', applied: 'barlow-rae-pope', reason: 'test', methods: [], signature: null, teCp: 0.1, maskellDrag: { cd: 0.01, source: 'pressure' } },
      uncertainty: { cl: { value: q.cl, u: 0.004, lo: q.cl - 0.002, hi: q.cl + 0.012 } },
    }] as unknown as RunResult[];
    const win = new Window();
    win.document.write(daySheetHtml({ session: fixtureSession(), setup: fixtureSetup(), runs, summary, paper: 'A4', generatedAt: '2026-11-18T18:00:00Z', timeZone: 'UTC', results }));
    const row = win.document.querySelector(`table.runs tr[data-run="${q.run}"]`)!;
    const spans = [...row.querySelectorAll('span.u')].map((e) => e.textContent);
    expect(spans).toEqual(['+0.0120', '−0.0020']);
    expect(win.document.body.textContent).toContain('reaches above (+) and below (−) it');
  });

  it('lists a flag raised identically on several runs once, with its runs', () => {
    const runs = fixtureRuns();
    const leak = { code: 'leaking-tap' as const, severity: 'warn' as const, reason: 'Tap C15 leaks at wind-off.' };
    for (const r of runs) if (r.result) r.result.flags = [...r.result.flags, leak];
    const { doc } = sheet({}, runs);
    const common = doc.querySelector('ul.common')!.textContent!;
    expect(common).toContain('Tap C15 leaks at wind-off.');
    expect(common).toContain('Runs 2–4');
    const perRun = doc.querySelector('ol.flagged')!.textContent!;
    expect(perRun).not.toContain('Tap C15 leaks');
    expect(perRun).toContain(LIFT_FLAG.reason);
    expect(perRun).not.toContain('Run 2 '); // run 2 has only the common flag
    expect(runRanges([9, 2, 3, 4, 7, 8, 12])).toBe('2–4, 7–9, 12');
    expect(runRanges([5, 6])).toBe('5, 6');
  });

  it('prints session statistics', () => {
    const { doc } = sheet();
    const t = doc.querySelector('table.stats')!.textContent!;
    expect(t).toContain('0.1106 per degree');
    expect(t).toContain('\u22124.04°');
    expect(t).toContain('1.3120 at α 12.21°');
    expect(t).toContain('0.00712');
    expect(t).toContain('110.5');
    expect(t).toContain('no down sweep');
  });

  it('print CSS: page size for the paper, margins, rows not split, table header repeated', () => {
    const a4 = sheet({ paper: 'A4' }).html;
    const letter = sheet({ paper: 'Letter' }).html;
    expect(a4).toMatch(/@page\s*{[^}]*size:\s*A4/);
    expect(letter).toMatch(/@page\s*{[^}]*size:\s*letter/);
    expect(a4).toMatch(/@page\s*{[^}]*margin:/);
    expect(a4).toMatch(/thead\s*{\s*display:\s*table-header-group/);
    expect(a4).toMatch(/tr, li[^{]*{[^}]*break-inside:\s*avoid/);
  });

  it('escapes every piece of text from the session, setup and flags', () => {
    const evil = '<script>alert(1)</script>';
    const runs = fixtureRuns();
    runs[3].result!.flags = [{ ...LIFT_FLAG, reason: '<img src=x onerror=alert(2)>' }];
    runs[3].review!.comment = '</li><script>x()</script>';
    const { html, doc } = sheet({ title: evil, operators: [`O'Brien & "Sons" <b>`], notes: '<iframe src="javascript:1">' }, runs);
    expect(doc.querySelectorAll('script, img, iframe').length).toBe(0);
    expect(html).not.toContain('<script');
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(doc.querySelector('h1')!.textContent).toContain(evil);
    expect(doc.querySelector('dl.facts')!.textContent).toContain(`O'Brien & "Sons" <b>`);
    expect(doc.querySelector('ol.flagged')!.textContent).toContain('<img src=x onerror=alert(2)>');
  });

  it('says so when there are too few runs for statistics or no flags', () => {
    const runs = fixtureRuns().slice(0, 2);
    const setup = fixtureSetup();
    const summary = { ...fixtureSummary(runs), stats: null };
    const html = daySheetHtml({ session: fixtureSession(), setup, runs, summary, paper: 'A4', generatedAt: 'now' });
    expect(html).toContain('Too few usable runs');
    expect(html).toContain('No run was flagged.');
  });
});

describe('svg plot helpers', () => {
  // 1-2-5 nice steps: common practice, no source.
  it('nice steps and ticks', () => {
    expect(niceStep(0.13)).toBeCloseTo(0.2, 12);
    expect(niceStep(3)).toBe(5);
    expect(niceStep(7)).toBe(10);
    expect(niceStep(1)).toBe(1);
    const t = niceTicks(0.03, 0.97, 5);
    expect(t.lo).toBe(0);
    expect(t.hi).toBeCloseTo(1, 12);
    expect(t.ticks).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    const neg = niceTicks(-4.2, 12.7, 5);
    expect(neg.lo).toBeLessThanOrEqual(-4.2);
    expect(neg.hi).toBeGreaterThanOrEqual(12.7);
    expect(neg.ticks).toContain(0);
    const flat = niceTicks(2, 2);
    expect(flat.lo).toBeLessThan(2);
    expect(flat.hi).toBeGreaterThan(2);
  });

  it('maps points linearly, inside the frame, y up, and skips non-finite values', () => {
    const svg = svgPlot({
      title: 't', xLabel: 'x', yLabel: 'y', width: 300, height: 200,
      series: [{ name: 's', colour: '#000', marker: 'circle', filled: true, line: 'none',
        points: [{ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 0.25, y: 0.75 }, { x: NaN, y: 2 }] }],
    });
    const win = new Window();
    win.document.body.innerHTML = svg;
    const frame = win.document.querySelector('rect.frame')!;
    const fx = Number(frame.getAttribute('x')), fy = Number(frame.getAttribute('y'));
    const fw = Number(frame.getAttribute('width')), fh = Number(frame.getAttribute('height'));
    const circles = [...win.document.querySelectorAll('circle')];
    expect(circles.length).toBe(3 + 1); // NaN point skipped; the last circle is the legend marker
    const [a, b, c] = circles.slice(0, 3).map((el) => ({ x: Number(el.getAttribute('cx')), y: Number(el.getAttribute('cy')) }));
    for (const p of [a, b, c]) {
      expect(p.x).toBeGreaterThan(fx);
      expect(p.x).toBeLessThan(fx + fw);
      expect(p.y).toBeGreaterThan(fy);
      expect(p.y).toBeLessThan(fy + fh);
    }
    expect(b.x).toBeGreaterThan(a.x);
    expect(b.y).toBeLessThan(a.y); // larger y is higher on the page
    expect(c.x).toBeCloseTo(a.x + 0.25 * (b.x - a.x), 0);
    expect(c.y).toBeCloseTo(a.y + 0.75 * (b.y - a.y), 0);
  });

  it('escapes text and formats numbers', () => {
    expect(escapeHtml(`<a href="x">'&'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;');
    expect(fmt(-0.00001, 3)).toBe('0.000');
    expect(fmt(-1.5, 2)).toBe('\u22121.50');
    expect(fmt(NaN, 2)).toBe('–');
  });
});
