import { arms, type Accounting, type Arm, type Study } from '@evenhand/entities';
import type { ReactNode } from 'react';
import { armAccount, lossLines, totalAccount } from '@/lib/accounting';
import { formatCount } from '@/lib/format';
import { armLabels } from '@/lib/study';

function Box({ title, children, tone = 'plain' }: { title: string; children: ReactNode; tone?: 'plain' | 'accent' }) {
  return (
    <div className={`flow-box rounded-md border-2 bg-surface px-4 py-3 ${tone === 'accent' ? 'border-accent' : 'border-line-strong'}`}>
      <h5 className="font-semibold">{title}</h5>
      <div className="mt-1 text-sm">{children}</div>
    </div>
  );
}

function Arrow() {
  return (
    <div aria-hidden="true" className="flow-arrow mx-auto flex h-7 w-4 flex-col items-center">
      <div className="w-0.5 flex-1 bg-ink" />
      <div className="h-0 w-0 border-x-[6px] border-t-[8px] border-x-transparent border-t-ink" />
    </div>
  );
}

function ArmColumn({ accounting, arm }: { accounting: Accounting; arm: Arm }) {
  const classrooms = armAccount(accounting, arm, 'classrooms');
  const students = armAccount(accounting, arm, 'students');
  const lines = [...lossLines(classrooms, ['classroom', 'classrooms']), ...lossLines(students, ['student', 'students'])];
  return (
    <section aria-label={`${armLabels[arm]} arm`} className="flow-arm">
      <h4 className="mb-2 text-center font-semibold">{armLabels[arm]} arm</h4>
      <ol className="space-y-0">
        <li>
          <Box title="Allocated" tone={arm === 'intervention' ? 'accent' : 'plain'}>
            <p data-testid="flow-allocated">
              {formatCount(classrooms.randomised)} classrooms, {formatCount(students.randomised)} students
            </p>
          </Box>
        </li>
        <li>
          <Arrow />
          <Box title="Not analysed">
            <p data-testid="flow-lost">
              {formatCount(classrooms.randomised - classrooms.analysed)} classrooms, {formatCount(students.randomised - students.analysed)} students
            </p>
            {lines.length > 0 && (
              <ul className="mt-1 list-disc pl-5">
                {lines.map((l) => (
                  <li key={l}>{l}</li>
                ))}
              </ul>
            )}
          </Box>
        </li>
        <li>
          <Arrow />
          <Box title="Analysed">
            <p data-testid="flow-analysed">
              {formatCount(classrooms.analysed)} classrooms, {formatCount(students.analysed)} students
            </p>
          </Box>
        </li>
      </ol>
    </section>
  );
}

/**
 * The participant flow (enrolment → allocation → follow-up → analysis), per arm, in classrooms and
 * students, drawn as boxes in HTML so it reads in order and prints as it looks.
 */
export function FlowDiagram({ study, accounting, source }: { study: Study; accounting: Accounting; source: string }) {
  const totalStudents = totalAccount(accounting, 'students').randomised;
  return (
    <figure className="flow-diagram" aria-labelledby="flow-caption">
      <div className="mx-auto max-w-xl">
        <Box title="Enrolled">
          {formatCount(study.counts.sites)} sites, {formatCount(study.counts.classrooms)} classrooms, {formatCount(totalStudents)} students
          registered by code
        </Box>
        <Arrow />
        <p className="text-center text-sm font-semibold">
          Randomised: {study.unitOfAssignment === 'classroom' ? 'classrooms drawn at random within each site' : `by ${study.unitOfAssignment}`}
          {study.quasiExperimental ? ', then changed by hand (quasi-experimental)' : ''}
        </p>
        <Arrow />
      </div>
      <div className="grid gap-6 sm:grid-cols-2">
        {arms.map((arm) => (
          <ArmColumn key={arm} accounting={accounting} arm={arm} />
        ))}
      </div>
      <figcaption id="flow-caption" className="mt-3 text-sm text-ink-muted">
        Participant flow per arm, in classrooms and students: analysed means an outcome score on{' '}
        {accounting.reads.includes('submitted') ? 'an accepted sheet or one awaiting review' : 'an accepted sheet'}
        {accounting.needsPretest ? ' and a pretest score, which the analysis adjusts for' : ''}; each student or classroom not analysed is
        counted once, under one reason. {source}
      </figcaption>
    </figure>
  );
}
