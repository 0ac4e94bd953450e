import { existsSync } from 'node:fs';
import path from 'node:path';
import { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import cookieParser from 'cookie-parser';
import express from 'express';
import helmet from 'helmet';
import { auditRouter } from './audit/router.js';
import { checksRouter } from './checks/router.js';
import { evidenceRouter } from './evidence/router.js';
import { classroomsRouter } from './classrooms/router.js';
import { rosterImportsRouter } from './roster-imports/router.js';
import { digestsRouter } from './digests/router.js';
import { drawRouter } from './draw/router.js';
import { measuresRouter } from './measures/router.js';
import { planRouter } from './plan/router.js';
import { runsRouter } from './runs/router.js';
import { scoreSheetsRouter } from './score-sheets/router.js';
import { studiesRouter } from './studies/router.js';
import { authenticate } from './auth/middleware.js';
import { authRouter } from './auth/router.js';
import { districtSignInRouter } from './auth/district-sign-in-router.js';
import type { Deps } from './deps.js';
import { apiNotFound, AppError, errorHandler } from './errors.js';
import { healthRouter } from './health/router.js';
import { listenOnOwnPrototypes } from './http/listen.js';
import { requestLog } from './http/request-log.js';
import { homeRouter } from './home/router.js';
import { openApiRouter } from './openapi/router.js';
import { sitesRouter } from './sites/router.js';
import { accountsRouter } from './accounts/router.js';

/** Builds the Express app without listening; tests import this. */
export function createApp(deps: Deps) {
  const app = express();
  listenOnOwnPrototypes(app);
  app.disable('x-powered-by');
  // Every API answer is `no-store`, so hashing each body for a weak ETag is wasted work; a locked run sets its own.
  app.set('etag', false);
  app.set('trust proxy', deps.config.trustProxy);
  app.use(helmet({ contentSecurityPolicy: { directives: { 'upgrade-insecure-requests': deps.config.production ? [] : null } } }));
  app.use(requestLog(deps.logger, { ignore: (url) => url === '/api/health' }));

  const registry = new OpenAPIRegistry();
  const api = express.Router();
  api.use(express.json({ limit: '1mb' }), cookieParser(), authenticate(deps));
  for (const router of [
    healthRouter(deps, registry),
    authRouter(deps, registry),
    districtSignInRouter(deps, registry),
    accountsRouter(deps, registry),
    studiesRouter(deps, registry),
    planRouter(deps, registry),
    measuresRouter(deps, registry),
    sitesRouter(deps, registry),
    classroomsRouter(deps, registry),
    rosterImportsRouter(deps, registry),
    drawRouter(deps, registry),
    scoreSheetsRouter(deps, registry),
    runsRouter(deps, registry),
    checksRouter(deps, registry),
    evidenceRouter(deps, registry),
    digestsRouter(deps, registry),
    auditRouter(deps, registry),
    homeRouter(deps, registry),
    openApiRouter(registry),
  ]) {
    api.use(router);
  }
  api.use(apiNotFound);
  app.use('/api', api);

  const web = deps.config.webDist;
  if (web && existsSync(path.join(web, 'index.html'))) {
    // Built files carry a hash of their content in their names, so they can be cached for good. A name that is gone
    // (a chunk of the release a page was opened with) answers 404, never the page: the browser then says a load failed.
    app.use('/assets', express.static(path.join(web, 'assets'), { immutable: true, maxAge: '1y' }), (req, _res, next) =>
      next(new AppError('not_found', `No such file: ${req.originalUrl.split('?')[0]} (it may belong to an earlier release)`)),
    );
    app.use(express.static(web, { index: false, maxAge: '1h' }));
    // Client-side routes: every other GET gets the single-page app.
    app.get('/{*splat}', (_req, res) => res.sendFile(path.join(web, 'index.html')));
  }

  app.use(errorHandler);
  return app;
}
