import { planBoundary, type Measure, type PlanContent, type PlanVersion, type Wave } from '@evenhand/entities';
import { FigureTable } from '@/components/ui/figure-table';
import { fieldLabel, formatPlanValue, planFieldLabels } from '@/lib/plan-labels';
import { formatDateTime } from '@/lib/format';

interface Refs {
  measures: Measure[];
  waves: Wave[];
}

/** Fields a reader needs only when a choice made them apply. */
function applies(field: keyof PlanContent, plan: PlanContent): boolean {
  if (field === 'alternativeJustification') return plan.alternative !== 'two-sided';
  if (field === 'primaryTestReason') return plan.primaryTest === 'student';
  if (field === 'icc') return plan.iccSource === 'assumed';
  if (field === 'covariateR2') return plan.covariate === 'baseline';
  if (field === 'attritionBoundaryReason') return plan.attritionBoundary === 'optimistic';
  return true;
}

/** A plan, read-only, field by field in the form's order. */
export function PlanSummary({ plan: given, measures, waves }: { plan: PlanContent } & Refs) {
  // A plan sealed before the boundary could be chosen registers the cautious one.
  const plan = { ...given, attritionBoundary: planBoundary(given).boundary };
  const fields = (Object.keys(planFieldLabels) as (keyof PlanContent)[]).filter((f) => applies(f, plan));
  return (
    <dl className="grid gap-x-8 gap-y-4 sm:grid-cols-2">
      {fields.map((field) => (
        <div key={field} className={field === 'hypothesis' || field.endsWith('Justification') || field.endsWith('Reason') ? 'sm:col-span-2' : undefined}>
          <dt className="text-sm font-semibold text-ink-muted">{planFieldLabels[field]}</dt>
          <dd className="mt-0.5">{formatPlanValue(field, plan[field], { measures, waves })}</dd>
        </div>
      ))}
    </dl>
  );
}

/** The fingerprint of a sealed version, split in groups so it can be read aloud and compared by eye. */
export function Fingerprint({ sha256 }: { sha256: string }) {
  return (
    <code className="font-mono text-sm break-all" aria-label={`SHA-256 ${sha256}`}>
      {sha256.match(/.{1,8}/g)?.join(' ')}
    </code>
  );
}

export function VersionHistory({ versions, measures, waves }: { versions: PlanVersion[] } & Refs) {
  return (
    <ol className="space-y-6">
      {[...versions].reverse().map((v) => (
        <li key={v.version} className="rounded-lg border border-line bg-surface p-5">
          <h4 className="font-semibold">
            Version {v.version} · {v.reason === null ? 'sealed' : 'amendment'}
          </h4>
          <p className="text-sm text-ink-muted">
            {formatDateTime(v.createdAt)} by {v.createdBy.name}
          </p>
          <p className="mt-1 text-sm">
            SHA-256 <Fingerprint sha256={v.sha256} />
          </p>
          {v.reason === null ? (
            <p className="mt-3">The plan as first registered.</p>
          ) : (
            <>
              <p className="mt-3">
                <span className="font-semibold">Reason: </span>
                {v.reason}
              </p>
              <FigureTable
                className="mt-3"
                caption={`What version ${v.version} changed`}
                columns={[
                  { key: 'field', header: 'Field' },
                  { key: 'from', header: `Version ${v.version - 1}` },
                  { key: 'to', header: `Version ${v.version}` },
                ]}
                rows={v.changes.map((c) => ({
                  id: c.field,
                  field: fieldLabel(c.field),
                  from: <del className="text-ink-muted">{formatPlanValue(c.field, c.from, { measures, waves })}</del>,
                  to: <ins className="font-semibold no-underline">{formatPlanValue(c.field, c.to, { measures, waves })}</ins>,
                }))}
              />
            </>
          )}
        </li>
      ))}
    </ol>
  );
}
