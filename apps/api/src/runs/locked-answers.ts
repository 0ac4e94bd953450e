import { createHash } from 'node:crypto';
import type { Request, Response } from 'express';
import type { DataSource } from 'typeorm';
import { districtWideRoles, smallCellViewerRoles, type SessionUser } from '@evenhand/entities';
import { changeFeed, TaggedCache } from '../db/change-feed.js';
import { findVisibleStudy, hasRole, sitesOf } from '../studies/access.js';
import { lockedRunProbeSql } from './queries.js';
import { getRun } from './service.js';

/**
 * A locked run never changes (the database refuses it), so its answer is built once per audience and served
 * from memory with an ETag. Only its Benjamini–Hochberg figures can move, when another confirmatory run of the
 * study finishes or is locked: the `version` read with every request is part of the key, so such a change
 * builds a new answer, in every API process alike.
 */
const MAX_ANSWERS = 500;
/** An answer as the bytes sent, so serving it encodes nothing. */
interface Answer {
  body: Buffer;
  etag: string;
}
const answers = new Map<string, Answer>();

interface LockedRunProbe {
  state: string;
  study_id: string;
  version: string;
}

const probes = new WeakMap<DataSource, TaggedCache<LockedRunProbe | undefined>>();

/**
 * The run's state and its study's version; a locked run's from memory until the change feed says a run of its study
 * finished, was locked or went (`runs:<study id>`), so the version read is always the current one.
 */
function probeRun(db: DataSource, runId: string): Promise<LockedRunProbe | undefined> {
  let cache = probes.get(db);
  if (!cache) probes.set(db, (cache = new TaggedCache<LockedRunProbe | undefined>(changeFeed(db), 5_000)));
  const load = async () =>
    ((await db.query(lockedRunProbeSql, [runId])) as LockedRunProbe[])[0];
  return cache.read(runId, load, (probe) => (probe?.state === 'locked' ? [`runs:${probe.study_id}`] : null));
}

/** The answer to `GET /api/runs/:id` for a locked run, or null when the run is not locked (or does not exist). */
export async function lockedRunAnswer(db: DataSource, user: SessionUser, runId: string): Promise<Answer | null> {
  const probe = await probeRun(db, runId);
  if (!probe || probe.state !== 'locked') return null;
  // District-wide staff see every study; anyone else is checked against the study as getRun would (404 if not theirs).
  if (!hasRole(user, ...districtWideRoles)) await findVisibleStudy(db.manager, user, probe.study_id);
  const audience = hasRole(user, ...smallCellViewerRoles) ? 'whole' : `schools:${[...sitesOf(user, 'principal')].sort().join(',')}`;
  const key = `${runId} ${probe.version} ${audience}`;
  let answer = answers.get(key);
  if (!answer) {
    const json = JSON.stringify(await getRun(db, user, runId));
    answer = { body: Buffer.from(json), etag: `"${createHash('sha256').update(json).digest('base64url').slice(0, 32)}"` };
    if (answers.size >= MAX_ANSWERS) answers.delete(answers.keys().next().value!);
    answers.set(key, answer);
  }
  return answer;
}

/** Sends a built answer; a client that already holds it (If-None-Match) gets 304 and no body. */
export function sendAnswer(req: Request, res: Response, answer: Answer): void {
  res.setHeader('ETag', answer.etag);
  res.setHeader('Content-Type', 'application/json; charset=utf-8');
  if (req.fresh) res.status(304).end();
  else res.send(answer.body);
}
