import { rm } from 'node:fs/promises';
import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import type { Request } from 'express';
import { pageOf, rosterImportSchema, rosterPreviewSchema, rosterSelectionSchema, studyParamsSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { AppError, issuesOf } from '../errors.js';
import { ResourceRouter } from '../http/route.js';
import { bundleUpload, openBundle, type Bundle } from './bundle.js';
import { commitRoster, listRosterImports, previewRoster } from './service.js';

/** Opens the uploaded bundle for `work` and always removes the temporary files afterwards. */
async function withBundle<T>(req: Request, work: (bundle: Bundle) => Promise<T>): Promise<T> {
  const files = (req.files as Express.Multer.File[]) ?? [];
  try {
    const bundle = await openBundle(files);
    try {
      return await work(bundle);
    } finally {
      bundle.close();
    }
  } finally {
    await Promise.all(files.map((f) => rm(f.path, { force: true })));
  }
}

function selectionOf(req: Request) {
  let raw: unknown;
  try {
    raw = JSON.parse(String(req.body?.selection ?? ''));
  } catch {
    throw AppError.validation('Send the chosen schools and classes as JSON in the form field “selection”');
  }
  const parsed = rosterSelectionSchema.safeParse(raw);
  if (!parsed.success) throw AppError.validation('The choice of schools and classes is not valid', issuesOf(parsed.error));
  return parsed.data;
}

export function rosterImportsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Roster imports';

  r.route(
    {
      method: 'get',
      path: '/studies/:id/roster-imports',
      summary: 'The study’s committed OneRoster imports, newest first, with what each changed',
      access: ['coordinator', 'research_lead'],
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'Imports', schema: pageOf(rosterImportSchema) } },
    },
    async ({ user, params }) => ({ body: await listRosterImports(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/roster-imports/preview',
      summary:
        'Preview a OneRoster 1.1 bulk export (multipart field `files`: one zip, or manifest.csv, orgs.csv, classes.csv, users.csv and enrollments.csv): the schools, classes, teachers and student counts it would enrol; nothing is written',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      before: [bundleUpload()],
      responses: { 200: { description: 'What the export would enrol', schema: rosterPreviewSchema } },
    },
    async ({ user, params, req }) => ({ body: await withBundle(req, (bundle) => previewRoster(deps, user!, params.id, bundle)) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/roster-imports',
      summary:
        'Import a OneRoster 1.1 bulk export (multipart field `files` as for the preview, and `selection`: JSON `{ schools, classes }` of sourcedIds); all or nothing',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      before: [bundleUpload()],
      responses: { 201: { description: 'Imported, with what changed', schema: rosterImportSchema } },
    },
    async ({ user, params, req }) => ({ status: 201, body: await withBundle(req, (bundle) => commitRoster(deps, user!, params.id, bundle, selectionOf(req))) }),
  );

  return r.router;
}
