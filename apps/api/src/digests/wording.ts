import { MIN_REPORTED_STUDENTS, SUPPRESSED_WORDS, type ReportedCount } from '@evenhand/entities';

const MINUS = '\u2212';

/** A number with fixed decimals and a true minus sign (the web app's formatNumber, for e-mail). */
export function formatNumber(x: number, digits = 2): string {
  const text = Math.abs(x).toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
  return x < 0 && Number(text.replace(/,/g, '')) !== 0 ? `${MINUS}${text}` : text;
}

export function formatSigned(x: number, digits = 2): string {
  const text = formatNumber(x, digits);
  return x > 0 && text !== formatNumber(0, digits) ? `+${text}` : text;
}

/** "p = .023" or "p < .001", as published reports write it. */
export function formatPStatement(p: number): string {
  if (p < 0.001) return 'p < .001';
  if (p > 0.999) return 'p > .999';
  return `p = ${p.toFixed(3).replace(/^0/, '')}`;
}

export function formatAlpha(alpha: number): string {
  return alpha.toFixed(alpha * 100 === Math.round(alpha * 100) ? 2 : 3).replace(/^0/, '');
}

const dateWords = new Intl.DateTimeFormat('en-US', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

/** "2026-05-22" → "May 22, 2026" (a calendar date, so no time zone shift). */
export function formatDay(isoDate: string): string {
  return dateWords.format(new Date(`${isoDate}T00:00:00Z`));
}

/** A count as a principal may read it: the number, or SUPPRESSED_WORDS when it is hidden. */
export function countWords(count: ReportedCount, noun: [string, string] = ['student', 'students']): string {
  if (count.suppressed || count.value === null) return SUPPRESSED_WORDS;
  return `${count.value.toLocaleString('en-US')} ${count.value === 1 ? noun[0] : noun[1]}`;
}

/**
 * Small-cell suppression with complementary suppression: every count under the minimum is hidden; if exactly one
 * is hidden while the total is shown, the next smallest is hidden too, so the hidden one cannot be worked out
 * as total minus the rest. The total is shown only when it reaches the minimum itself.
 */
export function suppressCounts(values: number[], min = MIN_REPORTED_STUDENTS): { cells: ReportedCount[]; total: ReportedCount; hidden: boolean } {
  const total = values.reduce((a, b) => a + b, 0);
  const hide = values.map((v) => v < min);
  const totalShown = total >= min;
  if (totalShown && values.length > 1 && hide.filter(Boolean).length === 1) {
    let pick = -1;
    values.forEach((v, i) => {
      if (!hide[i] && (pick < 0 || v < values[pick])) pick = i;
    });
    if (pick >= 0) hide[pick] = true;
  }
  return {
    cells: values.map((v, i) => (hide[i] ? { value: null, suppressed: true } : { value: v, suppressed: false })),
    total: totalShown ? { value: total, suppressed: false } : { value: null, suppressed: true },
    hidden: hide.some(Boolean) || !totalShown,
  };
}
