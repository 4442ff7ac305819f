// The Session settings form as data: field definitions, and validation of what was typed against
// the contract's settings patch schema (the same ranges main enforces).
import { settingsPatchSchema } from '../main/contract';
import type { CorrectionMethod, Settings } from '../app/types';

export type NumKey = Exclude<keyof Settings, 'correction' | 'badTaps' | 'keptTaps' | 'contourRule'>;

export interface NumField {
  key: NumKey;
  label: string;
  /** Shown value = stored value × scale (e.g. 100 for percent). */
  scale: number;
  unit: string;
  integer?: boolean;
  help: string;
  group: 'checks' | 'samples' | 'uncertainty' | 'walls';
}

export const NUM_FIELDS: NumField[] = [
  { key: 'liftTolAbs', label: 'Lift cross-check, absolute', scale: 1, unit: 'in cl', help: 'Flag when |cl mom − cl p| exceeds absolute + relative·|cl p|.', group: 'checks' },
  { key: 'liftTolRel', label: 'Lift cross-check, relative', scale: 100, unit: '% of |cl p|', help: 'Relative part of the lift tolerance.', group: 'checks' },
  { key: 'wakeEdgeTol', label: 'Wake edge tolerance', scale: 1, unit: 'in Cpt', help: 'Wake counts as captured when both rake edges read Cpt within this of 1.', group: 'checks' },
  { key: 'unsteadyThreshold', label: 'Unsteadiness limit', scale: 100, unit: '% std(q)/q', help: 'Flag the run when the dynamic pressure fluctuates more than this.', group: 'checks' },
  { key: 'zeroDriftFraction', label: 'Zero drift limit', scale: 100, unit: '% of q', help: 'Change of a wind-off zero between the runs bracketing a data run.', group: 'checks' },
  { key: 'leakPa', label: 'Leak limit', scale: 1, unit: 'Pa', help: 'A tap whose wind-off zero departs from the median of the taps by more than this is leaking.', group: 'checks' },
  { key: 'tapCheckK', label: 'Tap test factor k', scale: 1, unit: '× combined σ', help: 'A tap is an outlier when it departs from the prediction of its neighbours by more than k times the combined uncertainty of tap and prediction.', group: 'checks' },
  { key: 'tapCheckMinU', label: 'Tap Cp uncertainty, least', scale: 1, unit: 'in Cp (1σ)', help: 'The tap test never assumes a tap reads Cp better than this (tap hole and position effects).', group: 'checks' },
  { key: 'stagnationK', label: 'Stagnation check factor', scale: 1, unit: '× σ of the Cp', help: 'The highest Cp of a row above the isentropic stagnation value by more than this many standard uncertainties flags the references (q or p∞); the tap is kept.', group: 'checks' },
  { key: 'machLimit', label: 'Mach limit', scale: 1, unit: 'M', help: 'Flag runs faster than this as compressible.', group: 'checks' },
  { key: 'spanSpreadTol', label: 'Spanwise spread limit', scale: 1, unit: 'in cl', help: 'Spread of row cl across the span that flags poor two-dimensionality.', group: 'checks' },
  { key: 'wallFitResidualCp', label: 'Wall-signature residual limit', scale: 1, unit: 'rms Cp', help: 'Automatic choice uses the wall signature only when its fit leaves at most this rms residual.', group: 'walls' },
  { key: 'stallTeCp', label: 'Past-stall trailing-edge Cp', scale: 1, unit: 'Cp', help: 'Where the walls cannot say, a run whose rearmost upper tap (aft of 0.85c) reads at or below this gets Maskell’s blockage.', group: 'walls' },
  { key: 'maskellTheta', label: 'Maskell blockage factor θ', scale: 1, unit: '', help: 'Δq/q = θ·cd·c/h; 0.96 after Maskell (R&M 3400), 1.03 fitted better in one published comparison.', group: 'walls' },
  { key: 'correctionTolEps', label: 'Correction disagreement, ε', scale: 1, unit: 'in ε', help: 'Flag when the applied and the classical corrections differ in ε by more than this…', group: 'walls' },
  { key: 'correctionTolAlphaDeg', label: 'Correction disagreement, Δα', scale: 1, unit: '°', help: '…or in Δα by more than this.', group: 'walls' },
  { key: 'spikeK', label: 'Spike threshold', scale: 1, unit: '× robust σ', help: 'Samples beyond median ± k·MAD-σ are dropped before averaging.', group: 'samples' },
  { key: 'mcDraws', label: 'Monte Carlo draws', scale: 1, unit: 'draws', integer: true, help: '0 skips the 95 % intervals.', group: 'uncertainty' },
  { key: 'mcSeed', label: 'Monte Carlo seed', scale: 1, unit: '', integer: true, help: 'Same seed, same intervals.', group: 'uncertainty' },
];

export const CORRECTIONS: { value: CorrectionMethod; label: string }[] = [
  { value: 'auto', label: 'Automatic per run: wall signature where the walls can say, else Maskell past stall, else classical' },
  { value: 'wall-signature', label: 'Wall signature: vortex, source and doublet fitted to the floor and ceiling Cp (falls back if the walls cannot say)' },
  { value: 'maskell', label: 'Maskell’s separated-flow blockage θ·cd·c/h, classical solid blockage and curvature (ARC R&M 3400)' },
  { value: 'barlow-rae-pope', label: 'Classical: solid + wake blockage (c/4h)·cd and streamline curvature (Barlow, Rae & Pope)' },
  { value: 'allen-vincenti', label: 'Classical, Allen & Vincenti (NACA Report 782): same numbers here (Λσ not implemented)' },
  { value: 'none', label: 'None (uncorrected)' },
];

export const CONTOUR_RULES: { value: Settings['contourRule']; label: string }[] = [
  { value: 'shape', label: 'Shape (default): Cp linear between taps plus the fitted inviscid shape’s own departure from linear; linear on rows it cannot stand on' },
  { value: 'linear', label: 'Linear: Cp linear between taps on straight segments' },
  { value: 'spline', label: 'Spline: cubic splines in the square-root plane of the nose (not linear in the taps’ Cp)' },
];

export type FormValues = Record<NumKey, string> & { correction: CorrectionMethod; contourRule: Settings['contourRule'] };

/** Round away binary noise from the scale (0.03 × 100 = 3.0000000000000004). */
function tidy(v: number): string {
  return String(Number(v.toPrecision(12)));
}

export function formFromSettings(s: Settings): FormValues {
  const out = { correction: s.correction, contourRule: s.contourRule } as FormValues;
  for (const f of NUM_FIELDS) out[f.key] = tidy(s[f.key] * f.scale);
  return out;
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export interface FormCheck {
  /** Only the fields that changed, in stored units. */
  patch: Partial<Settings>;
  /** Field key → message. */
  errors: Partial<Record<NumKey | 'correction' | 'contourRule', string>>;
}

/** Validate typed values: numbers first, then the contract schema on the stored units. */
export function checkForm(values: FormValues, current: Settings): FormCheck {
  const errors: FormCheck['errors'] = {};
  const patch: Partial<Settings> = {};
  for (const f of NUM_FIELDS) {
    const raw = values[f.key].trim();
    if (!NUMBER.test(raw)) {
      errors[f.key] = raw === '' ? 'Enter a value.' : `"${raw}" is not a number (use a point for decimals).`;
      continue;
    }
    const shown = Number(raw);
    if (f.integer && !Number.isInteger(shown)) {
      errors[f.key] = 'Enter a whole number.';
      continue;
    }
    const v = f.scale === 1 ? shown : Number((shown / f.scale).toPrecision(12));
    if (v !== current[f.key]) (patch as Record<string, number>)[f.key] = v;
  }
  if (values.correction !== current.correction) patch.correction = values.correction;
  if (values.contourRule !== current.contourRule) patch.contourRule = values.contourRule;
  const r = settingsPatchSchema.safeParse(patch);
  if (!r.success) {
    for (const issue of r.error.issues) {
      const key = String(issue.path[0] ?? '') as NumKey;
      const field = NUM_FIELDS.find((f) => f.key === key);
      if (!field || errors[key]) continue;
      errors[key] = rangeMessage(issue, field);
    }
  }
  return { patch, errors };
}

function rangeMessage(issue: { code: string; message: string; minimum?: unknown; maximum?: unknown }, f: NumField): string {
  const show = (n: unknown) => tidy(Number(n) * f.scale);
  if (issue.code === 'too_small' && issue.minimum !== undefined) return `At least ${show(issue.minimum)} ${f.unit}.`.replace(/ \.$/, '.');
  if (issue.code === 'too_big' && issue.maximum !== undefined) return `At most ${show(issue.maximum)} ${f.unit}.`.replace(/ \.$/, '.');
  return issue.message;
}
