import { createHmac, timingSafeEqual } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import type { DigestFrequency, DigestPreference, MySchool, SessionUser, SiteFacts } from '@evenhand/entities';
import { UserEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import type { Config } from '../config.js';
import { AppError } from '../errors.js';
import { sitesOf } from '../studies/access.js';
import { buildSiteFacts } from './facts.js';
import { frequencySql, principalStudySitesSql, savePreferenceSql } from './queries.js';
import type { DigestLinks } from './templates.js';

// Preference links: a single-purpose signature over the user id, so they work without signing in and forever.

const PREFERENCE_PURPOSE = 'evenhand-digest-preferences';

function preferenceMac(config: Pick<Config, 'jwtSecret'>, userId: string): string {
  return createHmac('sha256', config.jwtSecret).update(`${PREFERENCE_PURPOSE}:${userId}`).digest('base64url');
}

export function preferenceToken(config: Pick<Config, 'jwtSecret'>, userId: string): string {
  return `${userId}.${preferenceMac(config, userId)}`;
}

function userOfToken(config: Pick<Config, 'jwtSecret'>, token: string): string {
  const [userId, mac, extra] = token.split('.');
  const invalid = AppError.validation('This link is not valid; use the newest digest e-mail, or sign in and open My school');
  if (!userId || !mac || extra !== undefined || !/^[0-9a-f-]{36}$/.test(userId)) throw invalid;
  const expected = Buffer.from(preferenceMac(config, userId));
  const given = Buffer.from(mac);
  if (expected.length !== given.length || !timingSafeEqual(expected, given)) throw invalid;
  return userId;
}

/** The links a digest carries: My school, and its recipient's signed preference links. */
export function linksFor(config: Pick<Config, 'appUrl' | 'jwtSecret'>, userId: string): DigestLinks {
  const token = encodeURIComponent(preferenceToken(config, userId));
  return {
    mySchool: `${config.appUrl}/my-school`,
    preferences: (frequency) => `${config.appUrl}/email-preferences?token=${token}${frequency ? `&frequency=${frequency}` : ''}`,
  };
}

// The principal's side: My school and the e-mail preferences

async function frequencyOf(manager: EntityManager, userId: string): Promise<DigestFrequency> {
  const [row]: { frequency: DigestFrequency }[] = await manager.query(frequencySql, [userId]);
  return row?.frequency ?? 'weekly';
}

/** My school: the digest's facts, live, for each of the principal's own schools in each of its studies. */
export async function mySchool(db: DataSource, config: Pick<Config, 'jwtSecret'>, user: SessionUser): Promise<MySchool> {
  const sites = sitesOf(user, 'principal');
  const pairs: { study_id: string; site_id: string }[] = sites.length
    ? await db.query(principalStudySitesSql, [sites])
    : [];
  const items: SiteFacts[] = [];
  for (const p of pairs) items.push(await buildSiteFacts(db.manager, p.study_id, p.site_id));
  return { items, total: items.length, digests: { frequency: await frequencyOf(db.manager, user.id), preferencesToken: preferenceToken(config, user.id) } };
}

export async function getPreference(db: DataSource, config: Pick<Config, 'jwtSecret'>, token: string): Promise<DigestPreference> {
  const userId = userOfToken(config, token);
  const user = await db.manager.findOne(UserEntity, { where: { id: userId }, select: { name: true } });
  if (!user) throw AppError.validation('This link is not valid any more');
  return { name: user.name, frequency: await frequencyOf(db.manager, userId) };
}

/** Changes how often the link's owner gets digests; no sign-in, the signed link is the proof. Audited. */
export async function setPreference(db: DataSource, config: Pick<Config, 'jwtSecret'>, token: string, frequency: DigestFrequency, via: string): Promise<DigestPreference> {
  const userId = userOfToken(config, token);
  return db.transaction(async (manager) => {
    const user = await manager.findOne(UserEntity, { where: { id: userId }, select: { name: true }, lock: { mode: 'pessimistic_write' } });
    if (!user) throw AppError.validation('This link is not valid any more');
    const before = await frequencyOf(manager, userId);
    await manager.query(savePreferenceSql, [userId, frequency]);
    await recordAudit(manager, { actorId: userId, action: 'digest.preference_changed', entityType: 'user', entityId: userId, before: { frequency: before }, after: { frequency, via } });
    return { name: user.name, frequency };
  });
}
