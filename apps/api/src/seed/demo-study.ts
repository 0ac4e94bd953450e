import type { SessionUser } from '@evenhand/entities';
import { SiteEntity, StudyEntity } from '@evenhand/entities/orm';
import { loadSessionUser } from '../auth/service.js';
import { createClassroom, createCohort } from '../classrooms/service.js';
import type { Deps } from '../deps.js';
import { drawAssignment } from '../draw/service.js';
import { createMeasure, createWave } from '../measures/service.js';
import { amendPlan, saveDraft, sealPlan } from '../plan/service.js';
import { enrolSite } from '../sites/service.js';
import { createStudy } from '../studies/service.js';
import { demoAccounts, demoSites } from './demo.js';
import { seedDemoRuns } from './demo-runs.js';
import { seedDemoScores } from './demo-scores.js';
import { demoTimeline, isoDaysFrom, type SeededTimeline, type TimelineMark } from './demo-timeline.js';

export const DEMO_STUDY_TITLE = 'Lantern Reading Routine in grades 3 and 4';
export const DRAFT_STUDY_TITLE = 'Number Journal Prompts in grade 5';
export const DEMO_DRAW_SEED = 'larkspur-valley-2025';

async function actor(deps: Deps, email: string): Promise<SessionUser> {
  const [row] = await deps.db.query(`SELECT id FROM users WHERE email = $1`, [email]);
  const user = row ? await loadSessionUser(deps.db, row.id) : null;
  if (!user) throw new Error(`demo account ${email} is missing; seed the accounts first`);
  return user;
}

/**
 * The demo study, built through the same services people use, so it obeys every rule:
 * six schools, two cohorts, 24 classrooms, a sealed plan with one amendment and a committed draw.
 * The services stamp everything with the real clock; each step takes a mark of when it ran and when it happens in
 * the demo's story (`demoTimeline(today)`), so `placeOnTimeline` can move the stamps there as the schema's owner.
 * Answers null when the demo study already existed.
 */
export async function seedDemoStudies(deps: Deps, today = new Date()): Promise<SeededTimeline | null> {
  const timeline = demoTimeline(today);
  const existing = await deps.db.manager.findOneBy(StudyEntity, { title: DEMO_STUDY_TITLE });
  const lead = await actor(deps, 'lead@evenhand.test');
  if (existing) {
    await seedDemoScores(deps.db, existing.id, timeline);
    await seedDemoRuns(deps, lead, existing.id);
    await seedDemoScores(deps.db, existing.id, timeline, 'follow-up');
    return null;
  }
  const coordinator = await actor(deps, 'coordinator@evenhand.test');
  const marks: TimelineMark[] = [];
  const realNow = async (): Promise<Date> => (await deps.db.query(`SELECT clock_timestamp() AS now`))[0].now;
  const step = async (story: Date) => {
    marks.push({ real: await realNow(), story });
  };

  await step(timeline.studyCreated);

  const study = await createStudy(deps.db, lead, {
    title: DEMO_STUDY_TITLE,
    intervention: 'A daily 20-minute routine: the teacher reads a short text aloud, pupils retell it to a partner, then reread it in pairs.',
    comparisonCondition: 'The school’s usual literacy block of the same length (business as usual).',
    unitOfAssignment: 'classroom',
  });
  const fluency = await createMeasure(deps.db, lead, study.id, { name: 'Oral reading fluency (words correct per minute)', minScore: 0, maxScore: 250, higherIsBetter: true, kind: 'achievement' });
  await createMeasure(deps.db, lead, study.id, { name: 'Classroom engagement rating', minScore: 1, maxScore: 5, higherIsBetter: true, kind: 'behaviour' });
  // A yes/no measure, pre-specified with the others: the sealed plan's comparisons cover every measure at the outcome wave.
  await createMeasure(deps.db, lead, study.id, { name: 'Read at grade level by spring', scale: 'yes-no', higherIsBetter: true, kind: 'achievement' });
  await createWave(deps.db, lead, study.id, { kind: 'baseline', ...timeline.baseline });
  const spring = await createWave(deps.db, lead, study.id, { kind: 'outcome', ...timeline.outcome });
  // A follow-up the next autumn, after the result is locked: where the demo's collection story (a sheet returned,
  // one awaiting review, one classroom not entered) lives, since the locked runs read only the first two waves.
  await createWave(deps.db, lead, study.id, { kind: 'follow-up', ...timeline.followUp });
  const plan = {
    primaryMeasureId: fluency.id,
    primaryWaveId: spring.id,
    hypothesis: 'Pupils in classrooms using the Lantern Reading Routine read more words correctly per minute in spring than pupils in business-as-usual classrooms, adjusting for their autumn score.',
    alpha: 0.05,
    alternative: 'two-sided' as const,
    alternativeJustification: '',
    primaryTest: 'two-level' as const,
    primaryTestReason: '',
    covariate: 'baseline' as const,
    unitOfAnalysis: 'student' as const,
    iccSource: 'default' as const,
    icc: null,
    smallestEffectOfInterest: 0.25,
    plannedSites: 6,
    plannedClassrooms: 24,
    plannedStudentsPerClassroom: 25,
    shareIntervention: 0.5,
    summaryEntryAllowed: false,
    covariateR2: 0.5,
    // Reading help could change which pupils stay in the study: the cautious attrition boundary.
    attritionBoundary: 'cautious' as const,
    attritionBoundaryReason: '',
  };
  await step(timeline.planDrafted);
  await saveDraft(deps.db, lead, study.id, plan);
  await step(timeline.planSealed);
  await sealPlan(deps.db, lead, study.id);
  await step(timeline.planAmended);
  await amendPlan(deps.db, lead, study.id, {
    reason: 'Last year’s district screening data showed an intraclass correlation of about .15 for fluency; the plan now assumes that value instead of the standard default.',
    plan: { ...plan, iccSource: 'assumed', icc: 0.15 },
  });

  await step(timeline.enrolled);
  const grade3 = await createCohort(deps.db, coordinator, study.id, `Grade 3, ${timeline.schoolYear}`);
  const grade4 = await createCohort(deps.db, coordinator, study.id, `Grade 4, ${timeline.schoolYear}`);
  const teachersBySite = new Map<string, { email: string; name: string }[]>();
  for (const a of demoAccounts) {
    const g = a.grants.find((x) => x.role === 'teacher');
    if (g?.site) teachersBySite.set(g.site, [...(teachersBySite.get(g.site) ?? []), { email: a.email, name: a.name }]);
  }
  for (const [i, code] of demoSites.map((s) => s.code).entries()) {
    const site = await deps.db.manager.findOneByOrFail(SiteEntity, { code });
    const principal = demoAccounts.find((a) => a.grants.some((g) => g.role === 'principal' && g.site === code))!;
    await enrolSite(deps, coordinator, study.id, { siteId: site.id, principal: { email: principal.email, name: principal.name } });
    // Teachers 1–4 teach two classrooms each at the first two schools; elsewhere one each.
    const staff = teachersBySite.get(code)!;
    const teachers = staff.length >= 4 ? staff.slice(0, 4) : [staff[0], staff[0], staff[1], staff[1]];
    const rooms = [
      { cohort: grade3, name: 'Room 3A', grade: '3' },
      { cohort: grade3, name: 'Room 3B', grade: '3' },
      { cohort: grade4, name: 'Room 4A', grade: '4' },
      { cohort: grade4, name: 'Room 4B', grade: '4' },
    ];
    for (const [j, room] of rooms.entries()) {
      await createClassroom(deps, coordinator, study.id, {
        siteId: site.id,
        cohortId: room.cohort.id,
        name: room.name,
        grade: room.grade,
        expectedSize: 22 + ((i * 4 + j) * 7) % 8,
        teacher: teachers[j],
      });
    }
  }
  await step(timeline.drawn);
  await drawAssignment(deps.db, coordinator, study.id, { seed: DEMO_DRAW_SEED, commit: true });
  // The sheets carry their own submission and review times from the timeline.
  await step(new Date(`${timeline.baseline.opensOn}T08:00:00Z`));
  await seedDemoScores(deps.db, study.id, timeline);
  await seedDemoRuns(deps, lead, study.id, step, timeline);
  await step(new Date(`${timeline.followUp.opensOn}T08:00:00Z`));
  await seedDemoScores(deps.db, study.id, timeline, 'follow-up');
  const end = await realNow();

  // A second study, still drafting, to show the planning calculator.
  const draft = await createStudy(deps.db, lead, {
    title: DRAFT_STUDY_TITLE,
    intervention: 'Three short written reflection prompts a week in mathematics lessons.',
    comparisonCondition: 'Usual mathematics lessons without the prompts.',
    unitOfAssignment: 'classroom',
  });
  await createMeasure(deps.db, lead, draft.id, { name: 'Spring mathematics assessment (scale score)', minScore: 100, maxScore: 400, higherIsBetter: true, kind: 'achievement' });
  // Still being planned, so its windows lie ahead of whatever day the demo is seeded on.
  await createWave(deps.db, lead, draft.id, { kind: 'baseline', name: 'Baseline', opensOn: isoDaysFrom(today, 42), closesOn: isoDaysFrom(today, 67) });
  await createWave(deps.db, lead, draft.id, { kind: 'outcome', name: 'Outcome', opensOn: isoDaysFrom(today, 266), closesOn: isoDaysFrom(today, 291) });
  return { timeline, marks, end };
}
