// Browser-safe: zod schemas and types shared by the web app and the API. Entities live under ./orm.
export * from './schemas/common.js';
export * from './schemas/roles.js';
export * from './schemas/auth.js';
export * from './schemas/district-sign-in.js';
export * from './schemas/users.js';
export * from './schemas/audit.js';
export * from './schemas/sites.js';
export * from './schemas/studies.js';
export * from './schemas/plan.js';
export * from './schemas/classrooms.js';
export * from './schemas/draws.js';
export * from './schemas/score-sheets.js';
export * from './schemas/runs.js';
export * from './schemas/checks.js';
export * from './schemas/digests.js';
export * from './schemas/home.js';
export * from './schemas/roster-imports.js';
