import type { Comparison } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';

/** Pre-specified (from the sealed plan) or exploratory (added later): marked wherever a comparison appears. */
export function ComparisonBadges({ comparison }: { comparison: Pick<Comparison, 'prespecified' | 'isPrimary'> }) {
  return (
    <span className="inline-flex flex-wrap gap-2">
      {comparison.prespecified ? <Badge tone="accent">Pre-specified</Badge> : <Badge tone="caution">Exploratory</Badge>}
      {comparison.isPrimary && <Badge tone="muted">Primary outcome</Badge>}
    </span>
  );
}

export const unitOfAnalysisLabels: Record<Comparison['unitOfAnalysis'], string> = {
  student: 'students',
  classroom: 'classroom averages',
  school: 'school averages',
};

export const covariateLabels: Record<Comparison['covariate'], string> = {
  baseline: 'adjusted for the baseline score in a sensitivity check',
  none: 'no baseline adjustment',
};
