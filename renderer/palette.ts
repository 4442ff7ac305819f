// Colours of Rakeline's screens. Data colours come from the Okabe–Ito colour-blind-safe set
// (M. Okabe & K. Ito, "Color Universal Design", 2002/2008); every colour-coded item ALSO carries a
// marker shape, a line style or a text badge, so nothing relies on colour alone.
import type { Flag, FlagCode } from '../app/types';

export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** Series roles used on every chart. */
export const SERIES = {
  upper: { color: OKABE_ITO.blue, marker: 'circle' as const, label: 'upper surface' },
  lower: { color: OKABE_ITO.vermillion, marker: 'triangle' as const, label: 'lower surface' },
  bad: { color: OKABE_ITO.black, marker: 'crossRot' as const, label: 'bad or bridged tap' },
  inviscid: { color: OKABE_ITO.bluishGreen, label: 'inviscid panel solution' },
  pressure: { color: OKABE_ITO.blue, label: 'cl from surface pressures' },
  momentum: { color: OKABE_ITO.orange, label: 'cl from wall momentum' },
  floor: { color: OKABE_ITO.reddishPurple, marker: 'rect' as const, label: 'floor' },
  ceiling: { color: OKABE_ITO.skyBlue, marker: 'rectRot' as const, label: 'ceiling (dashed)' },
  wake: { color: OKABE_ITO.blue, label: 'rake total-pressure Cpt' },
};

/** Short words for each flag code (our wording). */
export const FLAG_LABEL: Record<FlagCode, string> = {
  'lift-mismatch': 'lift methods disagree',
  'wake-not-captured': 'wake not captured',
  unsteady: 'unsteady flow',
  'bad-tap': 'bad tap',
  'leaking-tap': 'leaking tap',
  'zero-drift': 'zero drift',
  'no-zero': 'no wind-off zero',
  compressible: 'compressible',
  'span-spread': 'span spread',
  'correction-disagree': 'corrections differ',
};

/** Badge glyph + word per severity (shape and text, not just colour). */
export const SEVERITY = {
  reject: { glyph: '✖', word: 'hold', color: OKABE_ITO.vermillion, title: 'Do not use without review' },
  warn: { glyph: '▲', word: 'check', color: OKABE_ITO.orange, title: 'Look at it before use' },
} as const;

/** The worst severity in a list of flags (null when there are none). */
export function worstSeverity(flags: readonly Flag[] | null | undefined): 'reject' | 'warn' | null {
  if (!flags || flags.length === 0) return null;
  return flags.some((f) => f.severity === 'reject') ? 'reject' : 'warn';
}
