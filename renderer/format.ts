// Number and text formatting shared by every screen. Negative numbers use the typographic minus
// so columns of signed values line up; NaN/undefined show as an en dash.

const MINUS = '\u2212';

export function isNum(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

/** Fixed decimals with a true minus sign; '–' for missing values. */
export function fix(v: number | null | undefined, digits: number): string {
  if (!isNum(v)) return '–';
  const s = v.toFixed(digits);
  // -0.000 reads as a sign error to an engineer: show it unsigned.
  if (/^-0\.?0*$/.test(s)) return s.slice(1);
  return s.startsWith('-') ? MINUS + s.slice(1) : s;
}

/** Signed fixed: always shows + or −. */
export function signed(v: number | null | undefined, digits: number): string {
  if (!isNum(v)) return '–';
  const s = fix(v, digits);
  return s.startsWith(MINUS) || Number(v.toFixed(digits)) === 0 ? s : `+${s}`;
}

/** Reynolds number in millions, e.g. 0.52 → "0.520". */
export function reMillions(v: number | null | undefined): string {
  return isNum(v) ? fix(v / 1e6, 3) : '–';
}

/** Significant-figure form for small quantities (circulation in m²/s, uncertainties). */
export function sig(v: number | null | undefined, figures = 3): string {
  if (!isNum(v)) return '–';
  if (v === 0) return '0';
  const s = v.toPrecision(figures);
  const out = s.includes('e') ? Number(s).toExponential(figures - 1) : s;
  return out.startsWith('-') ? MINUS + out.slice(1) : out;
}

/** Local date-time of an ISO string, compact (YYYY-MM-DD HH:MM:SS). */
export function when(iso: string | null | undefined): string {
  if (!iso) return '–';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())} ${p(d.getHours())}:${p(d.getMinutes())}:${p(d.getSeconds())}`;
}

/** Clock time only (HH:MM:SS). */
export function clock(iso: string | null | undefined): string {
  const w = when(iso);
  return w.length > 10 && w.includes(' ') ? w.slice(11) : w;
}

/** Range "a … b" with units, collapsing equal ends. */
export function range(lo: number | null | undefined, hi: number | null | undefined, digits: number, unit = ''): string {
  if (!isNum(lo) || !isNum(hi)) return '–';
  const a = fix(lo, digits);
  const b = fix(hi, digits);
  const u = unit ? ` ${unit}` : '';
  return a === b ? `${a}${u}` : `${a} … ${b}${u}`;
}

/** Human text of an error of any shape (ContractError, LogError, Error, string). */
export function errorText(e: unknown): string {
  if (e && typeof e === 'object') {
    const o = e as { message?: unknown; detail?: { message?: unknown }; error?: { message?: unknown } };
    if (typeof o.detail?.message === 'string') return o.detail.message;
    if (typeof o.error?.message === 'string') return o.error.message;
    if (typeof o.message === 'string') return o.message;
  }
  return String(e);
}
