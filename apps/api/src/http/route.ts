import { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { Router, type Request, type RequestHandler, type Response } from 'express';
import { z } from 'zod';
import { errorBodySchema, type Role, type SessionUser } from '@evenhand/entities';
import { AppError, issuesOf } from '../errors.js';
import { authorize } from '../auth/middleware.js';

/** Who may call a route: everybody, any signed-in user, or an explicit list of roles. Nothing else. */
export type Access = 'anyone' | 'signed-in' | readonly Role[];

type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface RouteSpec<P extends z.ZodType, Q extends z.ZodType, B extends z.ZodType> {
  method: Method;
  /** Express-style path relative to /api, e.g. `/accounts/:id`. */
  path: string;
  summary: string;
  access: Access;
  tag: string;
  params?: P;
  query?: Q;
  body?: B;
  /** Success responses by status; errors are documented for every route. */
  responses: Record<number, { description: string; schema?: z.ZodType; contentType?: string }>;
  /** Extra middleware run after authorisation and before validation (e.g. multipart parsing). */
  before?: RequestHandler[];
}

export interface RouteContext<P, Q, B> {
  params: P;
  query: Q;
  body: B;
  /** Present on every route whose access is not 'anyone'. */
  user: SessionUser | undefined;
  req: Request;
  res: Response;
}

export type RouteResult = { status?: number; body?: unknown } | void;

/**
 * No API answer is stored by a browser or a proxy: many carry student-level data (bundles, score sheets, exports,
 * audit entries), and one rule for all cannot be forgotten on the next such route.
 */
const NO_STORE = 'no-store';
const noStoreHeader = { 'Cache-Control': { description: 'Always `no-store`', schema: { type: 'string' as const, enum: [NO_STORE] } } };

function parse<T extends z.ZodType>(schema: T | undefined, value: unknown, where: string): z.infer<T> {
  if (!schema) return value as z.infer<T>;
  const result = schema.safeParse(value);
  if (!result.success) {
    const issues = issuesOf(result.error);
    const fields = [...new Set(issues.map((i) => i.path || where))];
    throw AppError.validation(`Some ${where} values are not valid: ${fields.slice(0, 5).join(', ')}${fields.length > 5 ? ', …' : ''}`, issues);
  }
  return result.data;
}

/**
 * One router per resource. Each route states its path, its access and its schemas in one place:
 * the same declaration authorises, validates, and documents the route in the OpenAPI document.
 */
export class ResourceRouter {
  readonly router = Router();

  constructor(private readonly registry: OpenAPIRegistry) {}

  route<P extends z.ZodType = z.ZodType, Q extends z.ZodType = z.ZodType, B extends z.ZodType = z.ZodType>(
    spec: RouteSpec<P, Q, B>,
    handler: (ctx: RouteContext<z.infer<P>, z.infer<Q>, z.infer<B>>) => Promise<RouteResult> | RouteResult,
  ): void {
    this.document(spec);
    const run: RequestHandler = async (req, res) => {
      // Before anything can fail, so errors (a refused upload lists student codes) carry it too.
      res.setHeader('Cache-Control', NO_STORE);
      const ctx = {
        params: parse(spec.params, req.params, 'path'),
        query: parse(spec.query, req.query, 'query'),
        body: parse(spec.body, req.body ?? {}, 'request body'),
        user: req.user,
        req,
        res,
      };
      const result = await handler(ctx);
      if (res.headersSent) return;
      const status = result?.status ?? (result?.body === undefined ? 204 : 200);
      if (result?.body === undefined) res.status(status).end();
      else res.status(status).json(result.body);
    };
    this.router[spec.method](spec.path, authorize(spec.access), ...(spec.before ?? []), run);
  }

  private document(spec: RouteSpec<z.ZodType, z.ZodType, z.ZodType>) {
    const path = spec.path.replace(/:(\w+)/g, '{$1}');
    const error = (description: string) => ({ description, headers: noStoreHeader, content: { 'application/json': { schema: errorBodySchema } } });
    // Every route can answer each of these, in the one error shape.
    const errors = {
      400: error('Invalid input: `details.issues` lists each field (`path`) and what is wrong with it'),
      ...(spec.access === 'anyone' ? {} : { 401: error('Not signed in'), 403: error('Not allowed for your role') }),
      404: error('Not found, or not visible to you'),
      409: error('Conflicts with the current state (locked, already exists, changed meanwhile)'),
      413: error('The request body or upload is too large'),
      429: error('Too many requests; try again later'),
      500: error('Something went wrong on our side; the error has been logged'),
    };
    const responses = Object.fromEntries(
      Object.entries(spec.responses).map(([status, r]) => [
        status,
        r.schema
          ? { description: r.description, headers: noStoreHeader, content: { [r.contentType ?? 'application/json']: { schema: r.schema } } }
          : { description: r.description, headers: noStoreHeader },
      ]),
    );
    this.registry.registerPath({
      method: spec.method,
      path: `/api${path}`,
      summary: spec.summary,
      tags: [spec.tag],
      'x-access': spec.access,
      request: {
        params: spec.params as z.ZodObject | undefined,
        query: spec.query as z.ZodObject | undefined,
        body: spec.body ? { content: { 'application/json': { schema: spec.body } } } : undefined,
      },
      responses: { ...errors, ...responses },
    });
  }
}
