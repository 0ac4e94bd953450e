import { SUPPRESSED_WORDS, type ReportedCount } from '@evenhand/entities';
import { formatCount } from '@/lib/format';

/** A count a principal may read: the number, or SUPPRESSED_WORDS when the API hid it. */
export function ReportedCountText({ count }: { count: ReportedCount }) {
  if (count.suppressed || count.value === null) return <span className="text-ink-muted italic">{SUPPRESSED_WORDS}</span>;
  return <>{formatCount(count.value)}</>;
}
