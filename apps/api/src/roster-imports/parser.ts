import { createHmac, createSecretKey } from 'node:crypto';
import { once } from 'node:events';
import { finished } from 'node:stream/promises';
import type { PoolClient } from 'pg';
import type { EntityManager } from 'typeorm';
import { emailSchema, type CsvRowIssue } from '@evenhand/entities';
import { AppError } from '../errors.js';
import { csvStreamBatches, type CsvRecord } from '../lib/csv.js';
import type { Bundle, RosterFile } from './bundle.js';
import { analyseStaging, bundleProblems, copyIntoStaging, createStagingTables, type StagingTable } from './queries.js';
import { RepeatFilter } from './repeats.js';

/**
 * Reads a OneRoster 1.1 bulk bundle into temporary tables on the transaction's connection, batch by
 * batch (COPY), so memory does not grow with the export. Personal columns are dropped here, while
 * parsing: a student keeps only a keyed hash of their sourcedId and their role; teachers and
 * administrators keep the e-mail and name an invitation needs. References and duplicates are then
 * checked set-wise in SQL, each problem with its file and line.
 *
 * Columns: the 1EdTech OneRoster v1.1 CSV tables (checked against the published binding; see
 * oneroster.md beside this file). Headers are matched without regard to case.
 */

/** Every header the v1.1 binding lists for the file; a bulk export carries them all, even when empty. */
export const ROSTER_COLUMNS = {
  'manifest.csv': ['propertyName', 'value'],
  'orgs.csv': ['sourcedId', 'status', 'dateLastModified', 'name', 'type', 'identifier', 'parentSourcedId'],
  'classes.csv': [
    'sourcedId', 'status', 'dateLastModified', 'title', 'grades', 'courseSourcedId', 'classCode', 'classType', 'location',
    'schoolSourcedId', 'termSourcedIds', 'subjects', 'subjectCodes', 'periods',
  ],
  'users.csv': [
    'sourcedId', 'status', 'dateLastModified', 'enabledUser', 'orgSourcedIds', 'role', 'username', 'userIds', 'givenName',
    'familyName', 'middleName', 'identifier', 'email', 'sms', 'phone', 'agentSourcedIds', 'grades', 'password',
  ],
  'enrollments.csv': ['sourcedId', 'status', 'dateLastModified', 'classSourcedId', 'schoolSourcedId', 'userSourcedId', 'role', 'primary', 'beginDate', 'endDate'],
} as const satisfies Record<RosterFile, readonly string[]>;

type RosterColumn = (typeof ROSTER_COLUMNS)[RosterFile][number];
/** Each header as records are keyed (lower case), lowered once rather than for every value read. */
const KEYS = Object.fromEntries(Object.values(ROSTER_COLUMNS).flatMap((columns) => columns.map((c) => [c, c.toLowerCase()]))) as Record<RosterColumn, string>;
const REQUIRED = { required: true } as const;
const USER_ROLES = ['administrator', 'aide', 'guardian', 'parent', 'proctor', 'relative', 'student', 'teacher'];
const ENROLMENT_ROLES = ['administrator', 'proctor', 'student', 'teacher'];
const REPORTED = 500;
const MAX_ID = 255;
// Control characters other than tab have no place in a roster value.
// eslint-disable-next-line no-control-regex -- finding control characters is the point
const CONTROL = /[\u0000-\u0008\u000b-\u001f\u007f]/;

/**
 * The district's keyed hash of a user's sourcedId (HMAC-SHA-256, in hex): the only form in which it is stored. The key
 * is prepared once per import, not once per user, and the digest is hex at once (half the cost of a Buffer turned hex).
 */
function linkHasher(secret: string): (sourcedId: string) => string {
  const key = createSecretKey(Buffer.from(secret, 'utf8'));
  return (sourcedId) => createHmac('sha256', key).update(sourcedId, 'utf8').digest('hex');
}

/**
 * A fast unkeyed 106-bit hash (two seeds of the public-domain cyrb53) that joins enrolments to users and
 * finds duplicate enrolments inside the import's transaction, where it is dropped; a keyed hash per
 * enrolment row would double the import's cryptography. Collisions among a district's IDs: about n²/2¹⁰⁷.
 * Two COPY fields, each half as one 53-bit integer: PostgreSQL groups and joins two bigints faster than a text.
 * With a filter, the key (mixed with `salt`, when given) is also noted there.
 */
function joinKey(id: string, seen?: RepeatFilter, salt = 0): string {
  // Both seeds in one pass; each half is its 21 + 32 bits as one integer (exact in a double), printed in decimal.
  let a1 = 0xdeadbeef ^ 1;
  let a2 = 0x41c6ce57 ^ 1;
  let b1 = 0xdeadbeef ^ 2;
  let b2 = 0x41c6ce57 ^ 2;
  for (let i = 0; i < id.length; i++) {
    const ch = id.charCodeAt(i);
    a1 = Math.imul(a1 ^ ch, 2654435761);
    a2 = Math.imul(a2 ^ ch, 1597334677);
    b1 = Math.imul(b1 ^ ch, 2654435761);
    b2 = Math.imul(b2 ^ ch, 1597334677);
  }
  a1 = Math.imul(a1 ^ (a1 >>> 16), 2246822507) ^ Math.imul(a2 ^ (a2 >>> 13), 3266489909);
  a2 = Math.imul(a2 ^ (a2 >>> 16), 2246822507) ^ Math.imul(a1 ^ (a1 >>> 13), 3266489909);
  b1 = Math.imul(b1 ^ (b1 >>> 16), 2246822507) ^ Math.imul(b2 ^ (b2 >>> 13), 3266489909);
  b2 = Math.imul(b2 ^ (b2 >>> 16), 2246822507) ^ Math.imul(b1 ^ (b1 >>> 13), 3266489909);
  seen?.note(a1 ^ salt, b1 ^ Math.imul(salt, 0x9e3779b1));
  return `${(a2 & 2097151) * 4294967296 + (a1 >>> 0)}\t${(b2 & 2097151) * 4294967296 + (b1 >>> 0)}`;
}

/** A 32-bit FNV-1a hash of a text, to mix a class into its students' keys. */
function textHash(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193);
  return h;
}

class Problems {
  readonly list: CsvRowIssue[] = [];
  total = 0;
  add(file: RosterFile, row: number, column: string | null, message: string) {
    this.total += 1;
    if (this.list.length < REPORTED) this.list.push({ row, column: column ? `${file}: ${column}` : file, message });
  }
}

export function refuseRows(list: CsvRowIssue[], total: number): AppError {
  return new AppError('validation_failed', `${total} problem(s) in the bundle; nothing was imported`, { rows: list.slice(0, REPORTED) });
}

/** A value in COPY's text format (tested first: most values have nothing to escape, and a test costs less than a replace). */
const SPECIAL = /[\\\t\n\r]/;
const ESCAPED: Record<string, string> = { '\\': '\\\\', '\t': '\\t', '\n': '\\n', '\r': '\\r' };
const t = (value: string | null) => (value === null ? '\\N' : SPECIAL.test(value) ? value.replace(/[\\\t\n\r]/g, (c) => ESCAPED[c]) : value);

async function* records(bundle: Bundle, file: RosterFile): AsyncGenerator<CsvRecord[]> {
  const stream = await bundle.open(file);
  try {
    yield* csvStreamBatches(stream, ROSTER_COLUMNS[file].map((c) => c.toLowerCase()));
  } catch (err) {
    if (err instanceof AppError) throw new AppError(err.code, `${file}: ${err.message}`, err.details);
    // A zip entry that unpacks to other than its declared size, or a damaged one.
    throw AppError.validation(`${file} could not be read from the zip: ${(err as Error).message}; nothing was imported`);
  } finally {
    stream.destroy();
  }
}

async function readManifest(bundle: Bundle) {
  const properties = new Map<string, string>();
  for await (const batch of records(bundle, 'manifest.csv')) {
    for (const r of batch) properties.set(r.values.propertyname, r.values.value);
    if (properties.size > 200) throw AppError.validation('manifest.csv: too many properties');
  }
  const version = properties.get('oneroster.version');
  if (version !== '1.1') throw AppError.validation(`manifest.csv: oneroster.version is ${version ? `“${version}”` : 'missing'}; Evenhand reads OneRoster 1.1 exports`);
  const notBulk = ['orgs', 'classes', 'users', 'enrollments'].filter((f) => properties.get(`file.${f}`) !== 'bulk');
  if (notBulk.length) {
    throw AppError.validation(`manifest.csv: ${notBulk.map((f) => `file.${f}`).join(', ')} must be “bulk” (export the whole roster, not changes)`);
  }
}

/** Streams one file's rows into a temporary table; `toLine` turns a record into a COPY line, or null to skip it. */
async function copyRows(client: PoolClient, bundle: Bundle, file: RosterFile, table: StagingTable, toLine: (r: CsvRecord) => string | null): Promise<number> {
  const copy = copyIntoStaging(client, table);
  const copied = finished(copy);
  let rows = 0;
  try {
    for await (const batch of records(bundle, file)) {
      let text = '';
      for (const r of batch) {
        const line = toLine(r);
        if (line !== null) {
          text += line;
          rows += 1;
        }
      }
      if (text && !copy.write(text)) await once(copy, 'drain');
    }
    copy.end();
    await copied;
  } catch (err) {
    copy.destroy(err as Error);
    await copied.catch(() => {});
    throw err;
  }
  return rows;
}

/** What staging learnt on the way that later statements can use. */
export interface StagedBundle {
  /** Whether a student may be enrolled twice in one class (else the class lists are read without grouping). */
  studentsMayRepeatInAClass: boolean;
}

/**
 * Stages a bundle in `roster_orgs`, `roster_classes`, `roster_users` and `roster_enrolments` (dropped at
 * the end of the transaction) and throws a row-numbered 400 for anything wrong. Rows whose status is
 * `tobedeleted` are left out. The keys of users, of enrolments and of each student's place in a class pass
 * through fixed-size filters on the way, so that SQL groups them to find repeats only when one may exist.
 */
export async function stageBundle(manager: EntityManager, bundle: Bundle, secret: string): Promise<StagedBundle> {
  if (!manager.queryRunner) throw new Error('stageBundle runs inside a transaction');
  await readManifest(bundle);
  await createStagingTables(manager);
  const client = (await manager.queryRunner.connect()) as PoolClient;
  const problems = new Problems();
  const link = linkHasher(secret);
  const repeats = { users: new RepeatFilter(), enrolments: new RepeatFilter(), studentsInClasses: new RepeatFilter() };

  /** The row's value of a column, checked for length and control characters; null (with a problem) when bad. */
  const value = (file: RosterFile, r: CsvRecord, column: RosterColumn, { required = false, max = MAX_ID } = {}) => {
    const v = r.values[KEYS[column]] ?? '';
    if (required && !v) return problems.add(file, r.line, column, `${column} is empty`), null;
    if (v.length > max) return problems.add(file, r.line, column, `${column} is longer than ${max} characters`), null;
    if (CONTROL.test(v)) return problems.add(file, r.line, column, `${column} contains control characters`), null;
    return v;
  };
  const deleted = (r: CsvRecord) => r.values.status?.toLowerCase() === 'tobedeleted';

  await copyRows(client, bundle, 'orgs.csv', 'roster_orgs', (r) => {
    if (deleted(r)) return null;
    const [id, name, type, identifier] = [value('orgs.csv', r, 'sourcedId', REQUIRED), value('orgs.csv', r, 'name', { required: true, max: 160 }), value('orgs.csv', r, 'type', REQUIRED), value('orgs.csv', r, 'identifier', { max: 20 })];
    if (id === null || name === null || type === null || identifier === null) return null;
    return `${r.line}\t${t(id)}\t${t(name)}\t${t(type.toLowerCase())}\t${t(identifier)}\n`;
  });
  await copyRows(client, bundle, 'classes.csv', 'roster_classes', (r) => {
    if (deleted(r)) return null;
    const [id, title, grades, school] = [value('classes.csv', r, 'sourcedId', REQUIRED), value('classes.csv', r, 'title', { required: true, max: 120 }), value('classes.csv', r, 'grades'), value('classes.csv', r, 'schoolSourcedId', REQUIRED)];
    if (id === null || title === null || grades === null || school === null) return null;
    const grade = grades.split(',')[0].trim().slice(0, 20) || 'not given';
    return `${r.line}\t${t(id)}\t${t(title)}\t${t(grade)}\t${t(school)}\n`;
  });
  await copyRows(client, bundle, 'users.csv', 'roster_users', (r) => {
    if (deleted(r)) return null;
    const id = value('users.csv', r, 'sourcedId', REQUIRED);
    const role = (r.values.role ?? '').toLowerCase();
    if (!USER_ROLES.includes(role)) problems.add('users.csv', r.line, 'role', `role “${role}” is not a OneRoster 1.1 role`);
    if (id === null || !USER_ROLES.includes(role)) return null;
    const keys = `${joinKey(id, repeats.users)}\t\\\\x${link(id)}`;
    // A student's names, e-mail, username, identifiers, phone, grades and password are dropped here.
    if (role === 'student') return `${r.line}\t${keys}\tstudent\t\\N\t\\N\t\\N\n`;
    if (role !== 'teacher' && role !== 'administrator') return `${r.line}\t${keys}\t${role}\t\\N\t\\N\t\\N\n`;
    const given = value('users.csv', r, 'givenName', { max: 60 });
    const family = value('users.csv', r, 'familyName', { max: 60 });
    const orgs = value('users.csv', r, 'orgSourcedIds', { max: 4000 });
    const rawEmail = r.values.email ?? '';
    const email = rawEmail ? emailSchema.safeParse(rawEmail) : null;
    if (email && !email.success) problems.add('users.csv', r.line, 'email', `“${rawEmail}” is not an e-mail address`);
    const name = `${given ?? ''} ${family ?? ''}`.trim() || null;
    return `${r.line}\t${keys}\t${role}\t${t(email?.success ? email.data : null)}\t${t(name)}\t${t(orgs)}\n`;
  });
  await copyRows(client, bundle, 'enrollments.csv', 'roster_enrolments', (r) => {
    if (deleted(r)) return null;
    const id = value('enrollments.csv', r, 'sourcedId', REQUIRED);
    const cls = value('enrollments.csv', r, 'classSourcedId', REQUIRED);
    const user = value('enrollments.csv', r, 'userSourcedId', REQUIRED);
    const role = (r.values.role ?? '').toLowerCase();
    if (!ENROLMENT_ROLES.includes(role)) problems.add('enrollments.csv', r.line, 'role', `role “${role}” is not a OneRoster 1.1 enrolment role`);
    if (id === null || cls === null || user === null || !ENROLMENT_ROLES.includes(role)) return null;
    // An enrolment's own sourcedId often embeds the student's: only join keys reach the database.
    const userKey = role === 'student' ? joinKey(user, repeats.studentsInClasses, textHash(cls)) : joinKey(user);
    return `${r.line}\t${joinKey(id, repeats.enrolments)}\t${t(cls)}\t${userKey}\t${role}\t${r.values.primary?.toLowerCase() === 'true' ? 't' : 'f'}\n`;
  });
  if (problems.total) throw refuseRows(problems.list, problems.total);

  await analyseStaging(manager);
  const found = await bundleProblems(manager, REPORTED, { users: repeats.users.mayRepeat, enrolments: repeats.enrolments.mayRepeat });
  if (found.length) throw refuseRows(found.map((f) => ({ row: f.line, column: `${f.file}: ${f.col}`, message: f.message })), found[0].total);
  return { studentsMayRepeatInAClass: repeats.studentsInClasses.mayRepeat };
}
