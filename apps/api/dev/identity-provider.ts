// A fake district identity provider (OpenID Connect) for development and tests, on loopback only. Its people are the
// demo district's accounts, plus one whose e-mail the provider has not verified and one Evenhand does not know.
// `npm start`, `npm run dev` and `npm test` start it through scripts/lib.sh; API tests start their own in-process.
import { generateKeyPairSync, randomBytes } from 'node:crypto';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { parseArgs } from 'node:util';
import Provider from 'oidc-provider';
import { demoAccounts } from '../src/seed/demo.js';

export interface FakePerson {
  id: string;
  email: string;
  emailVerified: boolean;
  label: string;
}

/** Same client id and secret as `scripts/lib.sh` gives the API; never used outside loopback. */
export const FAKE_CLIENT = { id: 'evenhand-local', secret: 'evenhand-local-identity-provider-secret' };
/** A second registered client, so tests can show a token issued to someone else is refused. */
export const OTHER_CLIENT = { id: 'another-district-app', secret: 'another-district-app-secret-for-tests' };

export const fakePeople: FakePerson[] = [
  ...demoAccounts.map((a) => ({ id: a.email.split('@')[0], email: a.email, emailVerified: true, label: a.name })),
  // An Evenhand account's address the provider has not verified: Evenhand must not trust it.
  { id: 'unverified', email: 'coordinator@evenhand.test', emailVerified: false, label: 'Coordinator address, not verified' },
  // Verified, but nobody invited this person to Evenhand.
  { id: 'newcomer', email: 'newcomer@evenhand.test', emailVerified: true, label: 'Not invited to Evenhand' },
];

export interface FakeIdentityProvider {
  issuer: string;
  close(): Promise<void>;
  /** Answers the next token request with this body instead of the real one (tests of what the API must refuse). */
  replaceNextTokenResponse(body: Record<string, unknown>): void;
}

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

function pickerPage(uid: string, clientId: string): string {
  const rows = fakePeople
    .map(
      (p) =>
        `<li><button name="account" value="${escape(p.id)}">${escape(p.label)}<small>${escape(p.email)}${p.emailVerified ? '' : ' (not verified)'}</small></button></li>`,
    )
    .join('');
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>District sign-in (local test provider)</title>
<style>body{font:16px system-ui,sans-serif;margin:0 auto;max-width:34rem;padding:1rem}ul{list-style:none;padding:0}
button{display:block;width:100%;text-align:left;padding:.5rem;margin:.25rem 0;font:inherit;cursor:pointer}
small{display:block;color:#555}</style></head><body>
<h1>District sign-in</h1><p>A local test identity provider: no password. Choose who signs in to <b>${escape(clientId)}</b>.</p>
<form method="post" action="/interaction/${escape(uid)}/login"><ul>${rows}</ul></form></body></html>`;
}

async function readForm(req: IncomingMessage): Promise<URLSearchParams> {
  let body = '';
  for await (const chunk of req) {
    body += chunk;
    if (body.length > 10_000) throw new Error('form too large');
  }
  return new URLSearchParams(body);
}

export async function startFakeIdentityProvider(options: { port: number; redirectUris: string[] }): Promise<FakeIdentityProvider> {
  const server = createServer();
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, '127.0.0.1', () => resolve());
  });
  const issuer = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const { privateKey } = generateKeyPairSync('rsa', { modulusLength: 2048 });
  const byId = new Map(fakePeople.map((p) => [p.id, p]));

  const provider = new Provider(issuer, {
    clients: [FAKE_CLIENT, OTHER_CLIENT].map((c) => ({
      client_id: c.id,
      client_secret: c.secret,
      redirect_uris: options.redirectUris,
      grant_types: ['authorization_code'],
      response_types: ['code'],
    })),
    jwks: { keys: [{ ...privateKey.export({ format: 'jwk' }), kid: 'fake-district', use: 'sig', alg: 'RS256' }] },
    cookies: { keys: [randomBytes(32).toString('hex')] },
    claims: { openid: ['sub'], email: ['email', 'email_verified'] },
    // Put the e-mail claims in the ID token itself, as district providers commonly do.
    conformIdTokenClaims: false,
    ttl: { AuthorizationCode: 60, Interaction: 600, Session: 3600, Grant: 3600, AccessToken: 600, IdToken: 600 },
    pkce: { required: () => true },
    features: { devInteractions: { enabled: false } },
    interactions: { url: (_ctx, interaction) => `/interaction/${interaction.uid}` },
    async findAccount(_ctx, id) {
      const person = byId.get(id);
      if (!person) return undefined;
      return { accountId: id, claims: async () => ({ sub: id, email: person.email, email_verified: person.emailVerified }) };
    },
    // Every client here is first-party: grant what it asks for without a consent screen.
    async loadExistingGrant(ctx) {
      const accountId = ctx.oidc.session?.accountId;
      if (!accountId || !ctx.oidc.client) return undefined;
      const grant = new ctx.oidc.provider.Grant({ clientId: ctx.oidc.client.clientId, accountId });
      grant.addOIDCScope('openid email');
      await grant.save();
      return grant;
    },
  });
  const callback = provider.callback();
  let replacement: Record<string, unknown> | null = null;

  server.on('request', (req: IncomingMessage, res: ServerResponse) => {
    const url = new URL(req.url ?? '/', issuer);
    const interaction = url.pathname.match(/^\/interaction\/([\w-]+)(\/login)?$/);
    const handle = async () => {
      if (url.pathname === '/token' && replacement) {
        const body = replacement;
        replacement = null;
        for await (const _ of req); // drain the real request
        res.writeHead(200, { 'content-type': 'application/json', 'cache-control': 'no-store' }).end(JSON.stringify(body));
        return;
      }
      if (!interaction) return callback(req, res);
      const details = await provider.interactionDetails(req, res);
      if (req.method === 'GET' && !interaction[2]) {
        res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' }).end(pickerPage(details.uid, String(details.params.client_id)));
        return;
      }
      const accountId = (await readForm(req)).get('account') ?? '';
      if (req.method !== 'POST' || !byId.has(accountId)) {
        res.writeHead(400, { 'content-type': 'text/plain' }).end('Choose one of the listed people');
        return;
      }
      await provider.interactionFinished(req, res, { login: { accountId } }, { mergeWithLastSubmission: false });
    };
    handle().catch((error: unknown) => {
      if (!res.headersSent) res.writeHead(400, { 'content-type': 'text/plain' }).end(String((error as Error).message));
    });
  });

  return {
    issuer,
    replaceNextTokenResponse(body) {
      replacement = body;
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

// Run directly: `node --import tsx dev/identity-provider.ts --port 1090 --redirect-uri <uri> [--redirect-uri <uri>…]`.
if (import.meta.url === `file://${process.argv[1]}`) {
  const { values } = parseArgs({ options: { port: { type: 'string' }, 'redirect-uri': { type: 'string', multiple: true } } });
  const idp = await startFakeIdentityProvider({ port: Number(values.port ?? 1090), redirectUris: values['redirect-uri'] ?? [] });
  console.log(`fake district identity provider: ${idp.issuer}`);
  const stop = () => void idp.close().then(() => process.exit(0));
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}
