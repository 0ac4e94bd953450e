import type { Measure, PlanContent, Wave } from '@evenhand/entities';

/** The plan's fields in Evenhand's words, in the order the form and the read-only plan show them. */
export const planFieldLabels: Record<keyof PlanContent, string> = {
  primaryMeasureId: 'Primary measure',
  primaryWaveId: 'Primary wave',
  hypothesis: 'Hypothesis',
  alpha: 'Alpha (significance level)',
  alternative: 'Direction of the test',
  alternativeJustification: 'Why one-sided',
  primaryTest: 'Primary test',
  primaryTestReason: 'Why Student’s pooled test',
  covariate: 'Adjust for',
  unitOfAnalysis: 'Unit of analysis',
  iccSource: 'ICC for the clustering correction',
  icc: 'Assumed ICC',
  smallestEffectOfInterest: 'Smallest effect of interest (SD)',
  plannedSites: 'Planned sites',
  plannedClassrooms: 'Planned classrooms',
  plannedStudentsPerClassroom: 'Planned students per classroom',
  shareIntervention: 'Share in the intervention',
  covariateR2: 'Expected R² of the baseline score',
  attritionBoundary: 'Attrition boundary for the evidence verdict',
  attritionBoundaryReason: 'Why the optimistic boundary',
  summaryEntryAllowed: 'Classrooms may report only summaries',
};

/** The two attrition boundaries of the evidence standards, in the plan's words (the Checks offer the same two). */
export const attritionBoundaryLabels: Record<PlanContent['attritionBoundary'], string> = {
  cautious: 'Cautious: the intervention could affect which students leave',
  optimistic: 'Optimistic: the intervention is unlikely to affect which students leave',
};

export const alternativeLabels: Record<PlanContent['alternative'], string> = {
  'two-sided': 'Two-sided: either arm may come out ahead',
  greater: 'One-sided: the intervention scores higher',
  less: 'One-sided: the intervention scores lower',
};

export const primaryTestLabels: Record<PlanContent['primaryTest'], string> = {
  'two-level': 'Two-level model: students within their assigned classrooms or schools',
  welch: 'Welch’s t test: each arm keeps its own spread',
  student: 'Student’s pooled t test: both arms share one spread',
};

export const covariateLabels: Record<PlanContent['covariate'], string> = {
  baseline: 'The baseline score (pretest)',
  none: 'Nothing (compare outcome scores as they are)',
};

export const unitOfAnalysisLabels: Record<PlanContent['unitOfAnalysis'], string> = {
  student: 'Students',
  classroom: 'Classroom means',
  school: 'School means',
};

export const iccSourceLabels: Record<PlanContent['iccSource'], string> = {
  observed: 'Estimated from the scores',
  default: 'The standard default for the measure’s kind',
  assumed: 'A value I assume',
};

/** One plan value as a reader would say it; measures and waves by name. */
export function formatPlanValue(field: string, value: unknown, refs: { measures: Measure[]; waves: Wave[] }): string {
  if (value === null || value === undefined || value === '') return '—';
  switch (field) {
    case 'primaryMeasureId':
      return refs.measures.find((m) => m.id === value)?.name ?? 'A measure no longer listed';
    case 'primaryWaveId':
      return refs.waves.find((w) => w.id === value)?.name ?? 'A wave no longer listed';
    case 'alternative':
      return alternativeLabels[value as PlanContent['alternative']] ?? String(value);
    case 'primaryTest':
      return primaryTestLabels[value as PlanContent['primaryTest']] ?? String(value);
    case 'covariate':
      return covariateLabels[value as PlanContent['covariate']] ?? String(value);
    case 'unitOfAnalysis':
      return unitOfAnalysisLabels[value as PlanContent['unitOfAnalysis']] ?? String(value);
    case 'iccSource':
      return iccSourceLabels[value as PlanContent['iccSource']] ?? String(value);
    case 'attritionBoundary':
      return attritionBoundaryLabels[value as PlanContent['attritionBoundary']] ?? String(value);
    case 'shareIntervention':
      return `${Math.round(Number(value) * 100)}%`;
    default:
      if (typeof value === 'boolean') return value ? 'Yes' : 'No';
      return String(value);
  }
}

export function fieldLabel(field: string): string {
  return planFieldLabels[field as keyof PlanContent] ?? field;
}
