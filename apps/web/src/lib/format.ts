const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' });
const date = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium' });

export function formatDateTime(iso: string): string {
  return dateTime.format(new Date(iso));
}

export function formatDate(iso: string): string {
  return date.format(new Date(iso));
}

const MINUS = '\u2212';

/** A number with a fixed count of decimals and a true minus sign; "—" when there is no number. */
export function formatNumber(x: number | null | undefined, digits = 2): string {
  if (x === null || x === undefined || Number.isNaN(x)) return '—';
  if (x === Infinity) return '∞';
  if (x === -Infinity) return `${MINUS}∞`;
  const text = Math.abs(x).toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
  // A value that rounds to zero is shown without a sign.
  return x < 0 && Number(text.replace(/,/g, '')) !== 0 ? `${MINUS}${text}` : text;
}

/** Like formatNumber, with a plus sign on positive values (differences, effect sizes). */
export function formatSigned(x: number | null | undefined, digits = 2): string {
  const text = formatNumber(x, digits);
  return x !== null && x !== undefined && x > 0 && text !== formatNumber(0, digits) ? `+${text}` : text;
}

/** A p-value in the style of published reports: no leading zero, three decimals, "< .001" below that. */
export function formatP(p: number | null | undefined): string {
  if (p === null || p === undefined || Number.isNaN(p)) return '—';
  if (p < 0.001) return '< .001';
  if (p > 0.999) return '> .999';
  return p.toFixed(3).replace(/^0/, '');
}

/** "p = .023" or "p < .001". */
export function formatPStatement(p: number | null | undefined): string {
  const text = formatP(p);
  return text.startsWith('<') || text.startsWith('>') ? `p ${text}` : `p = ${text}`;
}

/** A confidence interval "[lower, upper]"; a one-sided interval shows its open end as ∞. */
export function formatInterval(ci: readonly [number | null, number | null], digits = 2): string {
  const [lo, hi] = ci;
  return `[${lo === null ? `${MINUS}∞` : formatNumber(lo, digits)}, ${hi === null ? '∞' : formatNumber(hi, digits)}]`;
}

/** A share already in percent (15.03 → "15.0%"). */
export function formatPercent(x: number | null | undefined, digits = 1): string {
  return x === null || x === undefined ? '—' : `${formatNumber(x, digits)}%`;
}

/** Alpha as people write it: .05, .01, .10. */
export function formatAlpha(alpha: number): string {
  return alpha.toFixed(alpha * 100 === Math.round(alpha * 100) ? 2 : 3).replace(/^0/, '');
}

export function formatCount(n: number): string {
  return n.toLocaleString('en-US');
}

const time = new Intl.DateTimeFormat(undefined, { timeStyle: 'short' });

export function formatTime(value: Date | string): string {
  return time.format(typeof value === 'string' ? new Date(value) : value);
}

/** A calendar day given as YYYY-MM-DD (a wave's dates), read in local time so it never shifts by a day. */
export function formatDay(day: string): string {
  const [y, m, d] = day.split('-').map(Number);
  return date.format(new Date(y, m - 1, d));
}

/** Today as YYYY-MM-DD in local time, to compare with calendar days. */
export function today(): string {
  const now = new Date();
  return `${now.getFullYear()}-${String(now.getMonth() + 1).padStart(2, '0')}-${String(now.getDate()).padStart(2, '0')}`;
}
