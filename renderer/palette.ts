// Colours of Rakeline's screens. Data colours come from the Okabe–Ito colour-blind-safe set
// (M. Okabe & K. Ito, "Color Universal Design", 2002/2008); every colour-coded item ALSO carries a
// marker shape, a line style or a text badge, so nothing relies on colour alone.

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

// Flag words, severity words, glyphs and colours: the one vocabulary table, app/flags.ts.
export { SEVERITY, worstSeverity, flagWords } from '../app/flags';
