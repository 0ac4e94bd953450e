import seedrandom from 'seedrandom';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from './app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from './fixtures.js';

/**
 * A bounded, deterministic property-based pass over every route of the OpenAPI document: for each route and each
 * of two roles, requests whose path, query and body are generated from the route's own schemas — mostly valid
 * shapes with hostile values (NUL, lone surrogates, other schools' ids, malformed ids, huge and negative numbers,
 * wrong types). The property: never a 5xx, and every error in the one error shape.
 */

type Schema = {
  $ref?: string;
  type?: string | string[];
  enum?: unknown[];
  const?: unknown;
  format?: string;
  minimum?: number;
  maximum?: number;
  minLength?: number;
  maxLength?: number;
  minItems?: number;
  maxItems?: number;
  items?: Schema;
  properties?: Record<string, Schema>;
  required?: string[];
  anyOf?: Schema[];
  oneOf?: Schema[];
  allOf?: Schema[];
  default?: unknown;
};
type Operation = {
  parameters?: { name: string; in: 'path' | 'query'; required?: boolean; schema: Schema }[];
  requestBody?: { content: Record<string, { schema: Schema }> };
  'x-access': unknown;
};

const SEED = 'evenhand-fuzz-1';
const PER_ROUTE = 3;

let t: TestApp;
let s: StudySetup;
let doc: { paths: Record<string, Record<string, Operation>>; components?: { schemas?: Record<string, Schema> } };
let ids: string[] = [];
const callers: { name: string; who: () => SignedIn }[] = [];
let coordinator: SignedIn;
let teacher: SignedIn;

beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
  await enrolClassrooms(s, 1, 2, ['teacher1@evenhand.test']);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'fuzz', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  coordinator = s.coordinator;
  teacher = await signIn(t.app, 'teacher1@evenhand.test');
  callers.push({ name: 'coordinator', who: () => coordinator }, { name: 'teacher', who: () => teacher });
  // Real ids of every kind (this study's and the demo district's), so generated paths reach the services.
  const rows: { id: string }[] = await t.db.query(
    `SELECT id::text FROM studies UNION ALL SELECT id::text FROM classrooms UNION ALL SELECT id::text FROM score_sheets
     UNION ALL SELECT id::text FROM sites UNION ALL SELECT id::text FROM users UNION ALL SELECT id::text FROM draws
     UNION ALL SELECT id::text FROM comparisons UNION ALL SELECT id::text FROM measures UNION ALL SELECT id::text FROM waves`,
  );
  ids = rows.map((r) => r.id).sort();
  doc = (await request(t.app).get('/api/openapi.json')).body;
}, 120_000);
afterAll(() => t.close());

/** Values that have broken APIs before: every generator mixes some in. */
const hostileStrings = ['', ' ', '\u0000', 'a\u0000b', '\uD800', 'x\uDC00', '😀'.repeat(3), "'; DROP TABLE users; --", '../../etc/passwd', '%00', '=1+2', 'A'.repeat(5000), '\\', '{}', 'null'];
const hostileNumbers = [0, -1, 1e308, -1e308, 0.5, 2 ** 53 + 1, Number.MIN_VALUE];

class Generator {
  private rng: () => number;
  constructor(
    seed: string,
    private readonly components: Record<string, Schema>,
  ) {
    this.rng = seedrandom(seed);
  }
  chance = (p: number) => this.rng() < p;
  int = (lo: number, hi: number) => lo + Math.floor(this.rng() * (hi - lo + 1));
  pick = <T,>(xs: readonly T[]): T => xs[this.int(0, xs.length - 1)];

  id(): string {
    if (this.chance(0.6) && ids.length) return this.pick(ids);
    return this.pick(['00000000-0000-0000-0000-000000000000', 'ffffffff-ffff-4fff-bfff-ffffffffffff', 'not-an-id', '-'.repeat(36), '1', '\u0000']);
  }

  string(schema: Schema): string {
    if (this.chance(0.25)) return this.pick(hostileStrings);
    if (schema.format === 'uuid') return this.id();
    if (schema.format === 'email') return this.pick(['teacher1@evenhand.test', `fuzz${this.int(0, 9)}@example.org`, 'no-at-sign', 'a@b']);
    if (schema.format === 'date') return this.pick(['2026-09-01', '2027-02-30', '0000-00-00', 'yesterday']);
    if (schema.format === 'date-time') return this.pick(['2026-09-01T08:00:00Z', '2026-13-01T00:00:00Z']);
    const lo = schema.minLength ?? 0;
    const hi = Math.min(schema.maxLength ?? 40, lo + 40);
    const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_. ,;\t\n';
    return Array.from({ length: this.int(lo, Math.max(lo, hi)) }, () => this.pick([...alphabet])).join('');
  }

  value(schema: Schema | undefined, depth = 0): unknown {
    if (!schema || depth > 6) return null;
    if (schema.$ref) return this.value(this.components[schema.$ref.split('/').pop()!], depth + 1);
    if (this.chance(0.06)) return this.pick([null, 42, 'text', true, [], {}]); // the wrong type
    if (schema.const !== undefined) return schema.const;
    if (schema.enum) return this.chance(0.9) ? this.pick(schema.enum) : 'not-one-of-them';
    const union = schema.anyOf ?? schema.oneOf;
    if (union) return this.value(this.pick(union), depth + 1);
    if (schema.allOf) return Object.assign({}, ...schema.allOf.map((x) => this.value(x, depth + 1)));
    const types = Array.isArray(schema.type) ? schema.type : schema.type ? [schema.type] : ['string'];
    const type = this.pick(types);
    switch (type) {
      case 'null':
        return null;
      case 'boolean':
        return this.chance(0.5);
      case 'integer':
      case 'number': {
        if (this.chance(0.2)) return this.pick(hostileNumbers);
        const lo = schema.minimum ?? -10;
        const hi = schema.maximum ?? lo + 200;
        const v = lo + this.rng() * Math.min(hi - lo, 1e6);
        return type === 'integer' ? Math.round(v) : Math.round(v * 10) / 10;
      }
      case 'array': {
        const n = this.int(schema.minItems ?? 0, Math.min(schema.maxItems ?? 3, (schema.minItems ?? 0) + 3));
        return Array.from({ length: n }, () => this.value(schema.items, depth + 1));
      }
      case 'object': {
        const out: Record<string, unknown> = {};
        for (const [key, sub] of Object.entries(schema.properties ?? {})) {
          if (schema.required?.includes(key) ? this.chance(0.95) : this.chance(0.5)) out[key] = this.value(sub, depth + 1);
        }
        if (this.chance(0.1)) out.unexpected = '\u0000';
        return out;
      }
      default:
        return this.string(schema);
    }
  }
}

/** Percent-encodes a path segment; a lone surrogate goes as the bytes of its (invalid) UTF-8 form, as a hostile client would send it. */
const encodePathPart = (v: string) =>
  [...v]
    .map((ch) => {
      try {
        return encodeURIComponent(ch);
      } catch {
        return '%ED%A0%80';
      }
    })
    .join('');

interface Call {
  method: string;
  url: string;
  body?: unknown;
  file?: Buffer;
}

function calls(path: string, method: string, op: Operation, gen: Generator): Call[] {
  const out: Call[] = [];
  for (let i = 0; i < PER_ROUTE; i++) {
    const url = path.replace(/\{(\w+)\}/g, (_, name: string) => {
      const p = op.parameters?.find((x) => x.in === 'path' && x.name === name);
      return encodePathPart(String(p ? gen.value(p.schema) : gen.id()));
    });
    const query = new URLSearchParams();
    for (const p of op.parameters?.filter((x) => x.in === 'query') ?? []) {
      if (p.required || gen.chance(0.5)) query.set(p.name, String(gen.value(p.schema) ?? ''));
    }
    const qs = query.toString();
    const schema = op.requestBody?.content['application/json']?.schema;
    const call: Call = { method, url: qs ? `${url}?${qs}` : url };
    if (schema) call.body = gen.value(schema);
    // Uploads are multipart: a small generated CSV, sometimes with hostile cells.
    if (/\/(upload|import)$/.test(path)) {
      const lines = Array.from({ length: gen.int(0, 4) }, () => [gen.string({}), gen.chance(0.8) ? String(gen.value({ type: 'number' })) : gen.string({}), gen.pick(['no', 'yes', '?']), gen.string({})].join(','));
      call.file = Buffer.from(['student_code,score,left,note', ...lines].join('\n'));
    }
    out.push(call);
  }
  return out;
}

describe('every route of the OpenAPI document, with generated input, as two roles', () => {
  it('never answers 5xx, and every error has the one error shape', async () => {
    const components = doc.components?.schemas ?? {};
    const failures: string[] = [];
    let sent = 0;
    // Signing out would end the callers' sessions: it runs last.
    const routes = Object.entries(doc.paths)
      .flatMap(([path, ops]) => Object.entries(ops).map(([method, op]) => ({ path, method, op })))
      .sort((a, b) => Number(a.path === '/api/auth/logout') - Number(b.path === '/api/auth/logout'));
    expect(routes.length).toBeGreaterThan(50);
    for (const caller of callers) {
      const gen = new Generator(`${SEED}:${caller.name}`, components);
      for (const { path, method, op } of routes) {
        for (const call of calls(path, method, op, gen)) {
          const who = caller.who();
          let req = who.agent[call.method as 'get' | 'post' | 'put' | 'patch' | 'delete'](call.url).set('x-csrf-token', who.csrf);
          if (call.file) req = req.attach('file', call.file, 'fuzz.csv');
          else if (call.body !== undefined) req = req.set('content-type', 'application/json').send(JSON.stringify(call.body));
          const res = await req;
          sent += 1;
          const what = `${caller.name} ${call.method.toUpperCase()} ${call.url.slice(0, 160)} ${JSON.stringify(call.body ?? null).slice(0, 200)}`;
          if (res.status >= 500) failures.push(`${res.status} ${what} → ${JSON.stringify(res.body).slice(0, 200)}`);
          else if (res.status >= 400 && res.type === 'application/json' && typeof res.body?.error?.code !== 'string') failures.push(`not the error shape: ${what}`);
        }
      }
    }
    expect(sent).toBe(routes.length * PER_ROUTE * callers.length);
    expect(failures).toEqual([]);
  }, 180_000);
});
