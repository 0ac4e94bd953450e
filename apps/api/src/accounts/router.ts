import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { acceptedRoleSchema, acceptRoleInvitationSchema, idParamsSchema, inviteAccountSchema, pageOf, updateAccountSchema, accountSchema, accountsQuerySchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { acceptRoleInvitation } from './role-invitations.js';
import { inviteAccount, listAccounts, updateAccount } from './service.js';

export function accountsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Accounts';

  r.route(
    {
      method: 'get',
      path: '/accounts',
      summary: 'List accounts (search, filter by role, sort, paginate)',
      access: ['admin'],
      tag,
      query: accountsQuerySchema,
      responses: { 200: { description: 'A page of accounts', schema: pageOf(accountSchema) } },
    },
    async ({ query }) => ({ body: await listAccounts(deps, query) }),
  );

  r.route(
    {
      method: 'post',
      path: '/accounts',
      summary: 'Invite a person: creates the account and e-mails a set-password link',
      access: ['admin'],
      tag,
      body: inviteAccountSchema,
      responses: { 201: { description: 'Invited', schema: accountSchema } },
    },
    async ({ body, user }) => ({ status: 201, body: await inviteAccount(deps, user!, body) }),
  );

  r.route(
    {
      method: 'patch',
      path: '/accounts/:id',
      summary: 'Rename, deactivate or reactivate an account, or change its role grants',
      access: ['admin'],
      tag,
      params: idParamsSchema,
      body: updateAccountSchema,
      responses: { 200: { description: 'The account as it is now', schema: accountSchema } },
    },
    async ({ params, body, user }) => ({ body: await updateAccount(deps, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'post',
      path: '/role-invitations/accept',
      summary: 'Accept the school role one was named for (the token from the e-mailed link); the grant is made now',
      access: 'signed-in',
      tag,
      body: acceptRoleInvitationSchema,
      responses: { 200: { description: 'The role now held', schema: acceptedRoleSchema } },
    },
    async ({ body, user }) => ({ body: await acceptRoleInvitation(deps, user!, body.token) }),
  );

  return r.router;
}
