import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { comparisonScheduleSchema, comparisonSchema, createComparisonSchema, idParamsSchema, pageOf, principalRunSchema, queueRunSchema, runSchema, studyParamsSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { runEvidence } from '../evidence/service.js';
import { ResourceRouter } from '../http/route.js';
import { lockedRunAnswer, sendAnswer } from './locked-answers.js';
import { createComparison, listComparisons, setSchedule } from './comparisons.js';
import { getRun, lockRun, queueRun, runBundle } from './service.js';

export function runsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Comparisons and runs';

  r.route(
    {
      method: 'get',
      path: '/studies/:id/comparisons',
      summary: 'The study’s comparisons: the sealed plan’s pre-specified ones first, then exploratory ones',
      access: ['research_lead', 'reviewer'],
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'Comparisons with their latest run', schema: pageOf(comparisonSchema) } },
    },
    async ({ user, params }) => ({ body: await listComparisons(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/comparisons',
      summary: 'Add an exploratory comparison (marked exploratory everywhere)',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      body: createComparisonSchema,
      responses: { 201: { description: 'Created', schema: comparisonSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await createComparison(deps.db, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'put',
      path: '/comparisons/:id/schedule',
      summary: 'Set, change or (with a null cron) remove the comparison’s automatic monitoring runs while its wave is open',
      access: ['research_lead'],
      tag,
      params: idParamsSchema,
      body: comparisonScheduleSchema,
      responses: { 200: { description: 'The comparison with its next scheduled run', schema: comparisonSchema } },
    },
    async ({ user, params, body }) => ({ body: await setSchedule(deps.db, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'post',
      path: '/comparisons/:id/runs',
      summary: 'Queue a run (monitoring or confirmatory) on the job queue',
      access: ['research_lead'],
      tag,
      params: idParamsSchema,
      body: queueRunSchema,
      responses: { 202: { description: 'Queued', schema: z.object({ run: runSchema }) } },
    },
    async ({ user, params, body }) => ({ status: 202, body: { run: await queueRun(deps, user!, params.id, body) } }),
  );

  r.route(
    {
      method: 'get',
      path: '/runs/:id',
      summary: 'A run’s state and results (principals: locked runs only, own school, small cells suppressed)',
      access: ['research_lead', 'reviewer', 'coordinator', 'principal'],
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'The run (a principal gets the principal view: PrincipalRun)', schema: z.union([runSchema, principalRunSchema]) } },
    },
    async ({ user, params, req, res }) => {
      // A locked run's answer is built once and served with an ETag; any other run is read afresh.
      const locked = await lockedRunAnswer(deps.db, user!, params.id);
      if (locked) return sendAnswer(req, res, locked);
      return { body: await getRun(deps.db, user!, params.id) };
    },
  );

  r.route(
    {
      method: 'post',
      path: '/runs/:id/lock',
      summary: 'Lock a finished confirmatory run: its inputs, plan version, engine version and data hash are frozen',
      access: ['research_lead'],
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'Locked', schema: runSchema } },
    },
    async ({ user, params }) => ({ body: await lockRun(deps, user!, params.id) }),
  );

  r.route(
    {
      method: 'get',
      path: '/runs/:id/bundle',
      summary: 'The reproducibility bundle: input rows (student codes only), plan, draw, results, engine version, data hash',
      access: ['research_lead', 'reviewer'],
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'The bundle as JSON' } },
    },
    async ({ user, params, res }) => {
      const bundle = await runBundle(deps.db, user!, params.id);
      // The evidence verdict with every reason, as the report shows it (a preview: the evidence reviewers decide).
      const evidence = await runEvidence(deps.db, user!, params.id);
      res.setHeader('content-disposition', `attachment; filename="evenhand-run-${params.id}.json"`);
      return { body: { ...bundle, evidence } };
    },
  );

  return r.router;
}
