import type { RunResults, Study } from '@evenhand/entities';
import type { ReactNode } from 'react';
import { formatCount } from '@/lib/format';
import { armLabels } from '@/lib/study';

type Flow = RunResults['flow'][number];

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

function ArmColumn({ flow }: { flow: Flow }) {
  const lost = flow.studentsAllocated - flow.studentsFollowedUp;
  const excluded = flow.studentsFollowedUp - flow.studentsAnalysed;
  const classroomsLost = flow.classroomsAllocated - flow.classroomsAnalysed;
  return (
    <section aria-label={`${armLabels[flow.arm]} arm`} className="flow-arm">
      <h4 className="mb-2 text-center font-semibold">{armLabels[flow.arm]} arm</h4>
      <ol className="space-y-0">
        <li>
          <Box title="Allocated" tone={flow.arm === 'intervention' ? 'accent' : 'plain'}>
            {formatCount(flow.classroomsAllocated)} classrooms, {formatCount(flow.studentsAllocated)} students
          </Box>
        </li>
        <li>
          <Arrow />
          <Box title="Followed up">
            {formatCount(flow.studentsFollowedUp)} students with an outcome score on an accepted sheet; {formatCount(lost)} not analysed (left
            the study, no score, or their classroom’s sheet not accepted: not entered, returned or awaiting review)
          </Box>
        </li>
        <li>
          <Arrow />
          <Box title="Analysed">
            {formatCount(flow.classroomsAnalysed)} classrooms, {formatCount(flow.studentsAnalysed)} students
            {classroomsLost > 0 && `; ${formatCount(classroomsLost)} ${classroomsLost === 1 ? 'classroom' : 'classrooms'} without an accepted outcome sheet`}
            {excluded > 0 && `; ${formatCount(excluded)} students excluded`}
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
export function FlowDiagram({ study, flow, source }: { study: Study; flow: Flow[]; source: string }) {
  const totalStudents = flow.reduce((t, f) => t + f.studentsAllocated, 0);
  const ordered = [...flow].sort((a, b) => (a.arm === 'intervention' ? -1 : b.arm === 'intervention' ? 1 : 0));
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
        {ordered.map((f) => (
          <ArmColumn key={f.arm} flow={f} />
        ))}
      </div>
      <figcaption id="flow-caption" className="mt-3 text-sm text-ink-muted">
        Participant flow per arm, in classrooms and students. {source}
      </figcaption>
    </figure>
  );
}
