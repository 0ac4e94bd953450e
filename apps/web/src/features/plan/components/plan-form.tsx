import {
  alternatives,
  amendmentSchema,
  attritionBoundaries,
  defaultPrimaryTest,
  planContentSchema,
  primaryTests,
  type Amendment,
  type Measure,
  type PlanContent,
  type PlanContentInput,
  type UnitOfAssignment,
  type Wave,
} from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { FormProvider, useForm, useFormContext, useWatch, type Resolver } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Checkbox, ChoiceGroup } from '@/components/ui/choice-group';
import { Dialog } from '@/components/ui/dialog';
import { Field, Select, TextArea, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { EvidencePreview } from '@/features/plan/components/evidence-preview';
import { PlanningPanel } from '@/features/plan/components/planning-panel';
import {
  alternativeLabels,
  attritionBoundaryLabels,
  covariateLabels,
  iccSourceLabels,
  planFieldLabels,
  primaryTestLabels,
  unitOfAnalysisLabels,
} from '@/lib/plan-labels';
import { defaultIcc, planningFields, type PlanningValues } from '@/features/plan/planning';
import { formatTime } from '@/lib/format';
import { plainMessages } from '@/lib/form-messages';
import { useApiSubmit } from '@/lib/use-api-submit';

/** The amendment form: the whole plan plus the reason, checked by the same schemas the API uses. */
const amendFormSchema = planContentSchema.safeExtend({ reason: amendmentSchema.shape.reason });
type FormValues = PlanContentInput & { reason?: string };
const formFields = [...Object.keys(planContentSchema.shape), 'reason'];

const asNumber = { valueAsNumber: true } as const;
const numberProps = { type: 'number', inputMode: 'decimal', step: 'any' } as const;

/** Leaves out what a choice made irrelevant (a reason for a test not chosen), so the plan records only what applies. */
function tidy(plan: PlanContent): PlanContent {
  return {
    ...plan,
    alternativeJustification: plan.alternative === 'two-sided' ? '' : plan.alternativeJustification,
    primaryTestReason: plan.primaryTest === 'student' ? plan.primaryTestReason : '',
    icc: plan.iccSource === 'assumed' ? plan.icc : null,
    covariateR2: plan.covariate === 'baseline' ? plan.covariateR2 : 0,
    attritionBoundaryReason: plan.attritionBoundary === 'optimistic' ? plan.attritionBoundaryReason : '',
  };
}

/** A new plan: the analysis that matches the study's assignment, and otherwise the schema's defaults. */
export function blankPlan(unit: UnitOfAssignment): FormValues {
  return {
    primaryMeasureId: '',
    primaryWaveId: '',
    hypothesis: '',
    alpha: 0.05,
    alternative: 'two-sided',
    alternativeJustification: '',
    primaryTest: defaultPrimaryTest(unit),
    primaryTestReason: '',
    // The schema's default; the API asks for a baseline wave if there is none yet.
    covariate: 'baseline',
    unitOfAnalysis: 'student',
    iccSource: 'default',
    icc: null,
    smallestEffectOfInterest: 0.25,
    plannedSites: undefined as unknown as number,
    plannedClassrooms: undefined as unknown as number,
    plannedStudentsPerClassroom: undefined as unknown as number,
    shareIntervention: 0.5,
    summaryEntryAllowed: false,
    covariateR2: 0,
    attritionBoundary: 'cautious',
    attritionBoundaryReason: '',
  };
}

interface RefsProps {
  measures: Measure[];
  waves: Wave[];
  unit: UnitOfAssignment;
}

function PlanFields({ measures, waves, unit }: RefsProps) {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<FormValues>();
  const [alternative, primaryTest, covariate, iccSource, primaryMeasureId, attritionBoundary] = useWatch({
    control,
    name: ['alternative', 'primaryTest', 'covariate', 'iccSource', 'primaryMeasureId', 'attritionBoundary'],
  });
  const measure = measures.find((m) => m.id === primaryMeasureId) ?? null;
  const outcomeWaves = waves.filter((w) => w.kind !== 'baseline');
  const hasBaseline = waves.some((w) => w.kind === 'baseline');
  const clustered = unit !== 'student';

  return (
    <>
      <fieldset className="space-y-5">
        <legend className="text-lg font-semibold">The primary outcome</legend>
        <Field
          label={planFieldLabels.primaryMeasureId}
          hint={measures.length === 0 ? 'Add a measure above first.' : 'The one measure the confirmatory result is about.'}
          error={errors.primaryMeasureId?.message}
        >
          {(control) => (
            <Select {...control} {...register('primaryMeasureId')} disabled={measures.length === 0}>
              <option value="">Choose a measure</option>
              {measures.map((m) => (
                <option key={m.id} value={m.id}>
                  {m.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field
          label={planFieldLabels.primaryWaveId}
          hint={outcomeWaves.length === 0 ? 'Add an outcome wave above first.' : 'When the outcome is measured (not the baseline).'}
          error={errors.primaryWaveId?.message}
        >
          {(control) => (
            <Select {...control} {...register('primaryWaveId')} disabled={outcomeWaves.length === 0}>
              <option value="">Choose a wave</option>
              {outcomeWaves.map((w) => (
                <option key={w.id} value={w.id}>
                  {w.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field
          label={planFieldLabels.hypothesis}
          hint="What you expect, in a sentence or two: which arm, which measure, when."
          error={errors.hypothesis?.message}
        >
          {(control) => <TextArea {...control} rows={3} {...register('hypothesis')} />}
        </Field>
      </fieldset>

      <fieldset className="space-y-5">
        <legend className="text-lg font-semibold">The test</legend>
        <Field label={planFieldLabels.alpha} hint="The chance of a false positive you accept; .05 is usual." error={errors.alpha?.message} className="max-w-xs">
          {(control) => <TextInput {...control} {...numberProps} {...register('alpha', asNumber)} />}
        </Field>
        <ChoiceGroup
          legend={planFieldLabels.alternative}
          error={errors.alternative?.message}
          input={register('alternative')}
          choices={alternatives.map((a) => ({
            value: a,
            label: alternativeLabels[a],
            hint: a === 'two-sided' ? 'Recommended: it reports a difference in either direction.' : undefined,
          }))}
        />
        {alternative !== 'two-sided' && (
          <Field
            label={planFieldLabels.alternativeJustification}
            hint="A one-sided test ignores a difference in the other direction; say why that is acceptable here."
            error={errors.alternativeJustification?.message}
          >
            {(control) => <TextArea {...control} rows={2} {...register('alternativeJustification')} />}
          </Field>
        )}
        <ChoiceGroup
          legend={planFieldLabels.primaryTest}
          error={errors.primaryTest?.message}
          input={register('primaryTest')}
          choices={primaryTests
            .filter((t) => clustered || t !== 'two-level')
            .map((t) => ({
              value: t,
              label: primaryTestLabels[t],
              hint:
                t === 'two-level'
                  ? 'Recommended when classrooms or schools are assigned: it nests students in the assigned units, uses the draw’s schools as blocks and adjusts for the pretest.'
                  : t === 'welch' && !clustered
                    ? 'Recommended when students are assigned: it stays accurate when the arms’ spreads differ.'
                    : undefined,
            }))}
        />
        {primaryTest === 'student' && (
          <Field
            label={planFieldLabels.primaryTestReason}
            hint="The pooled test assumes both arms vary equally; say why you expect that."
            error={errors.primaryTestReason?.message}
          >
            {(control) => <TextArea {...control} rows={2} {...register('primaryTestReason')} />}
          </Field>
        )}
        <ChoiceGroup
          legend={planFieldLabels.covariate}
          hint={hasBaseline ? undefined : 'Adjusting for the baseline score needs a baseline wave.'}
          error={errors.covariate?.message}
          input={register('covariate')}
          choices={(['baseline', 'none'] as const).map((c) => ({ value: c, label: covariateLabels[c] }))}
        />
      </fieldset>

      <fieldset className="space-y-5">
        <legend className="text-lg font-semibold">Clustering</legend>
        {primaryTest !== 'two-level' && (
          <Field
            label={planFieldLabels.unitOfAnalysis}
            hint="Students are usually analysed even when classrooms are assigned; the ICC below then corrects for clustering."
            error={errors.unitOfAnalysis?.message}
            className="max-w-md"
          >
            {(control) => (
              <Select {...control} {...register('unitOfAnalysis')}>
                {(['student', 'classroom', 'school'] as const).map((u) => (
                  <option key={u} value={u}>
                    {unitOfAnalysisLabels[u]}
                  </option>
                ))}
              </Select>
            )}
          </Field>
        )}
        <ChoiceGroup
          legend={planFieldLabels.iccSource}
          hint={
            clustered
              ? primaryTest === 'two-level'
                ? 'How alike students of one classroom are (the intraclass correlation): for the power calculation and the clustering-correction sensitivity check; the two-level model estimates its own.'
                : 'How alike students of one classroom are (the intraclass correlation).'
              : 'Only used if classrooms or schools are assigned.'
          }
          error={errors.iccSource?.message}
          input={register('iccSource')}
          choices={(['default', 'observed', 'assumed'] as const).map((s) => ({
            value: s,
            label: iccSourceLabels[s],
            hint:
              s === 'default'
                ? `${defaultIcc(measure?.kind ?? null).toFixed(2)} for ${measure?.kind === 'behaviour' ? 'a behaviour' : 'an achievement'} measure (0.20 achievement, 0.10 behaviour).`
                : s === 'observed'
                  ? 'From the scores at analysis; the standard default if it cannot be estimated.'
                  : undefined,
          }))}
        />
        {iccSource === 'assumed' && (
          <Field label={planFieldLabels.icc} hint="From earlier data of your district, e.g. 0.15." error={errors.icc?.message} className="max-w-xs">
            {(control) => (
              <TextInput
                {...control}
                {...numberProps}
                {...register('icc', { setValueAs: (v: string) => (v === '' || v === null ? null : Number(v)) })}
              />
            )}
          </Field>
        )}
      </fieldset>

      <fieldset className="space-y-5">
        <legend className="text-lg font-semibold">Planned numbers</legend>
        <Field
          label={planFieldLabels.smallestEffectOfInterest}
          hint="The smallest difference, in standard deviations, worth acting on; 0.25 is a common benchmark."
          error={errors.smallestEffectOfInterest?.message}
          className="max-w-xs"
        >
          {(control) => <TextInput {...control} {...numberProps} {...register('smallestEffectOfInterest', asNumber)} />}
        </Field>
        <div className="grid gap-5 sm:grid-cols-3">
          <Field label={planFieldLabels.plannedSites} error={errors.plannedSites?.message}>
            {(control) => <TextInput {...control} type="number" inputMode="numeric" min={1} {...register('plannedSites', asNumber)} />}
          </Field>
          <Field label={planFieldLabels.plannedClassrooms} error={errors.plannedClassrooms?.message}>
            {(control) => <TextInput {...control} type="number" inputMode="numeric" min={2} {...register('plannedClassrooms', asNumber)} />}
          </Field>
          <Field label={planFieldLabels.plannedStudentsPerClassroom} error={errors.plannedStudentsPerClassroom?.message}>
            {(control) => <TextInput {...control} type="number" inputMode="numeric" min={1} {...register('plannedStudentsPerClassroom', asNumber)} />}
          </Field>
        </div>
        <div className="grid gap-5 sm:grid-cols-2">
          <Field
            label={planFieldLabels.shareIntervention}
            hint="As a proportion: 0.5 puts half in each arm."
            error={errors.shareIntervention?.message}
          >
            {(control) => <TextInput {...control} {...numberProps} {...register('shareIntervention', asNumber)} />}
          </Field>
          {covariate === 'baseline' && (
            <Field
              label={planFieldLabels.covariateR2}
              hint="How much of the outcome the pretest explains, 0 to 1; reading pretests often reach 0.5."
              error={errors.covariateR2?.message}
            >
              {(control) => <TextInput {...control} {...numberProps} {...register('covariateR2', asNumber)} />}
            </Field>
          )}
        </div>
      </fieldset>

      <fieldset className="space-y-5">
        <legend className="text-lg font-semibold">Evidence standards</legend>
        <ChoiceGroup
          legend={planFieldLabels.attritionBoundary}
          hint="The evidence verdict judges lost classrooms and students against this boundary, registered with the plan as a review protocol would choose it."
          error={errors.attritionBoundary?.message}
          input={register('attritionBoundary')}
          choices={attritionBoundaries.map((b) => ({
            value: b,
            label: attritionBoundaryLabels[b],
            hint: b === 'cautious' ? 'Recommended unless you can say why leaving cannot depend on the intervention.' : undefined,
          }))}
        />
        {attritionBoundary === 'optimistic' && (
          <Field
            label={planFieldLabels.attritionBoundaryReason}
            hint="The optimistic boundary tolerates more attrition; say why which students leave cannot depend on the intervention."
            error={errors.attritionBoundaryReason?.message}
          >
            {(control) => <TextArea {...control} rows={2} {...register('attritionBoundaryReason')} />}
          </Field>
        )}
      </fieldset>

      <fieldset className="space-y-3">
        <legend className="text-lg font-semibold">Data entry</legend>
        <Checkbox
          label={planFieldLabels.summaryEntryAllowed}
          hint="Lets a classroom report only its number of students, mean and SD instead of each student’s score. Fewer analyses are then possible."
          {...register('summaryEntryAllowed')}
        />
      </fieldset>
    </>
  );
}

/** Watches only what the calculation reads, so typing the hypothesis does not recompute it. */
function LivePlanningPanel({ unit, measures }: { unit: UnitOfAssignment; measures: Measure[] }) {
  const { control } = useFormContext<FormValues>();
  const watched = useWatch({ control, name: [...planningFields, 'primaryMeasureId'] });
  const values = Object.fromEntries(planningFields.map((f, i) => [f, watched[i]])) as PlanningValues;
  const measure = measures.find((m) => m.id === watched[planningFields.length]);
  return <PlanningPanel values={values} context={{ unit, measureKind: measure?.kind ?? null, yesNo: measure?.scale === 'yes-no' }} />;
}

/** What the design can reach under the evidence standards, live from the fields it depends on. */
function LiveEvidencePreview({ unit, measures, waves, quasi }: RefsProps & { quasi: boolean }) {
  const { control } = useFormContext<FormValues>();
  const [plannedSites, plannedClassrooms, plannedStudentsPerClassroom, shareIntervention, covariate, primaryTest, primaryMeasureId, attritionBoundary] = useWatch({
    control,
    name: ['plannedSites', 'plannedClassrooms', 'plannedStudentsPerClassroom', 'shareIntervention', 'covariate', 'primaryTest', 'primaryMeasureId', 'attritionBoundary'],
  });
  const counts = [plannedSites, plannedClassrooms, plannedStudentsPerClassroom].map(Number);
  if (counts.some((n) => !Number.isInteger(n) || n < 1) || !(Number(shareIntervention) > 0 && Number(shareIntervention) < 1)) return null;
  const baselineMeasured = waves.some((w) => w.kind === 'baseline');
  const yesNo = measures.find((m) => m.id === primaryMeasureId)?.scale === 'yes-no';
  return (
    <EvidencePreview
      design={{
        randomised: !quasi,
        unitOfAssignment: unit,
        plannedSites: counts[0],
        plannedClassrooms: counts[1],
        plannedStudentsPerClassroom: counts[2],
        shareIntervention: Number(shareIntervention),
        baselineMeasured,
        // As the run decides: the two-level model adjusts for the pretest of a score measure (a yes/no one is decided without it).
        adjustsForBaseline: primaryTest === 'two-level' && covariate === 'baseline' && !yesNo && baselineMeasured,
        // Cluster-assigned studies are decided by the two-level model or with the clustering correction.
        accountsForClustering: true,
        boundary: attritionBoundary ?? 'cautious',
      }}
    />
  );
}

interface PlanFormProps extends RefsProps {
  /** The study is no longer (or never was) randomised: the evidence preview's best case is with reservations. */
  quasiExperimental?: boolean;
  initial: FormValues;
  /** Draft mode: save the draft, or seal it after a confirmation. */
  onSaveDraft?: (plan: PlanContent) => Promise<unknown>;
  onSeal?: (plan: PlanContent) => Promise<unknown>;
  /** Amendment mode: the whole plan with a reason. */
  onAmend?: (amendment: Amendment) => Promise<unknown>;
  onCancel?: () => void;
}

export function PlanForm({ initial, measures, waves, unit, quasiExperimental = false, onSaveDraft, onSeal, onAmend, onCancel }: PlanFormProps) {
  const amending = onAmend !== undefined;
  const [saved, setSaved] = useState<string | null>(null);
  const [sealing, setSealing] = useState<PlanContent | null>(null);
  const [sealBusy, setSealBusy] = useState(false);
  // Tracked by hand: react-hook-form's isDirty reads dirty on mount under StrictMode.
  const [edited, setEdited] = useState(false);
  const form = useForm<FormValues>({
    resolver: (amending ? zodResolver(amendFormSchema, plainMessages) : zodResolver(planContentSchema, plainMessages)) as unknown as Resolver<FormValues>,
    defaultValues: initial,
  });
  const {
    register,
    handleSubmit,
    reset,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit: save, problem, clearProblem, sendOther } = useApiSubmit(form, formFields, async (values) => {
    setSaved(null);
    const plan = tidy(values as PlanContent);
    if (amending) {
      await onAmend({ reason: values.reason ?? '', plan });
    } else {
      await onSaveDraft?.(plan);
      reset(plan);
      setEdited(false);
      setSaved(`Draft saved at ${formatTime(new Date())}.`);
    }
  });

  const askToSeal = handleSubmit((values) => {
    clearProblem();
    setSaved(null);
    setSealing(tidy(values as PlanContent));
  });

  return (
    <FormProvider {...form}>
      <div className="grid gap-8 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <form
          noValidate
          onSubmit={save}
          onChange={() => {
            setEdited(true);
            setSaved(null);
          }}
          className="space-y-8"
          aria-label={amending ? 'Amendment' : 'Plan'}
        >
          {problem && <FormProblemAlert problem={problem} />}
          {amending && (
            <Field
              label="Reason for the amendment"
              hint="Why the registered plan must change. It is kept with the new version for everyone to read."
              error={errors.reason?.message}
            >
              {(control) => <TextArea {...control} rows={3} {...register('reason')} />}
            </Field>
          )}
          <PlanFields measures={measures} waves={waves} unit={unit} />
          <div className="flex flex-wrap items-center gap-3 border-t border-line pt-6">
            {amending ? (
              <>
                <Button type="submit" busy={isSubmitting}>
                  File the amendment
                </Button>
                {onCancel && (
                  <Button variant="secondary" onClick={onCancel}>
                    Cancel
                  </Button>
                )}
              </>
            ) : (
              <>
                <Button type="submit" variant="secondary" busy={isSubmitting}>
                  Save draft
                </Button>
                {onSeal && <Button onClick={askToSeal}>Seal the plan…</Button>}
              </>
            )}
            <p aria-live="polite" className="text-sm text-ink-muted">
              {saved ?? (edited && !amending ? 'Unsaved changes.' : '')}
            </p>
          </div>
        </form>
        <aside aria-label="Power and minimum detectable effect" className="xl:sticky xl:top-6 xl:self-start">
          <div className="space-y-6">
            <LivePlanningPanel unit={unit} measures={measures} />
            <LiveEvidencePreview unit={unit} measures={measures} waves={waves} quasi={quasiExperimental} />
          </div>
        </aside>
      </div>

      <Dialog
        open={sealing !== null}
        title="Seal the plan?"
        description="Sealing registers the plan as it is now. It is final: Evenhand stores its time and a SHA-256 fingerprint, and any later change becomes a numbered amendment with a reason that reviewers can read."
        onClose={() => setSealing(null)}
      >
        <ul className="list-disc space-y-1 pl-5">
          <li>The measures can no longer change once the plan is sealed.</li>
          <li>The draw of classrooms can run once it is sealed.</li>
        </ul>
        <div className="mt-6 flex flex-wrap gap-3">
          <Button
            busy={sealBusy}
            onClick={async () => {
              if (!sealing || !onSeal) return;
              setSealBusy(true);
              // The dialog closes either way; a refusal shows above the form like a refused draft.
              await sendOther(() => onSeal(sealing).finally(() => setSealing(null)));
              setSealBusy(false);
            }}
          >
            Seal the plan
          </Button>
          <Button variant="secondary" onClick={() => setSealing(null)}>
            Keep editing
          </Button>
        </div>
      </Dialog>
    </FormProvider>
  );
}
