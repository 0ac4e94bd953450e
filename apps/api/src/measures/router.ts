import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { createMeasureSchema, createWaveSchema, measureSchema, pageOf, studyParamsSchema, waveSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { createMeasure, createWave, listMeasures, listWaves } from './service.js';

/** Measures (outcome instruments) and waves (collection windows) of a study. */
export function measuresRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Measures and waves';
  const readers = ['research_lead', 'coordinator', 'reviewer', 'teacher', 'principal'] as const;

  r.route(
    {
      method: 'get',
      path: '/studies/:id/measures',
      summary: 'The study’s measures',
      access: readers,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'All measures', schema: pageOf(measureSchema) } },
    },
    async ({ user, params }) => ({ body: await listMeasures(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/measures',
      summary: 'Add a measure (before the plan is sealed)',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      body: createMeasureSchema,
      responses: { 201: { description: 'Created', schema: measureSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await createMeasure(deps.db, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/waves',
      summary: 'The study’s waves',
      access: readers,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'All waves', schema: pageOf(waveSchema) } },
    },
    async ({ user, params }) => ({ body: await listWaves(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/waves',
      summary: 'Add a wave (baseline, outcome or follow-up) with its open and close dates',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      body: createWaveSchema,
      responses: { 201: { description: 'Created', schema: waveSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await createWave(deps.db, user!, params.id, body) }),
  );

  return r.router;
}
