import { z } from 'zod';
import { plainText } from './common.js';

/** Who may sign in with a password: everyone, or (once the district's provider is in use) the admin only. */
export const passwordSignInSchema = z.enum(['everyone', 'admin_only']);
export type PasswordSignIn = z.infer<typeof passwordSignInSchema>;

/** The district's sign-in settings, as the admin sees them. */
export const signInSettingsSchema = z
  .object({
    passwordSignIn: passwordSignInSchema,
    /** Whether the server has a district identity provider configured (OIDC_ISSUER_URL and its client). */
    districtSignIn: z.boolean(),
    /** When and by whom the admin last changed them; null while they are the defaults. */
    updatedAt: z.string().nullable(),
    updatedBy: z.string().nullable(),
  })
  .meta({ id: 'SignInSettings' });
export type SignInSettings = z.infer<typeof signInSettingsSchema>;

export const signInSettingsUpdateSchema = z.strictObject({ passwordSignIn: passwordSignInSchema });
export type SignInSettingsUpdate = z.infer<typeof signInSettingsUpdateSchema>;

/** A path inside the app to return to after signing in; never another site (`//host`) or the API. */
export const returnPathSchema = z
  .string()
  .max(500)
  .regex(/^\/(?![/\\])(?!api(?:\/|$))[^\s\\]*$/, 'A return path is a path inside the app');

export const districtSignInStartQuerySchema = z.object({ next: returnPathSchema.optional() });

/** The callback's query, as the provider sends it; the library checks it (state, iss, code) in full. */
export const districtSignInCallbackQuerySchema = z.object({
  state: plainText().max(500).optional(),
  code: plainText().max(2000).optional(),
  iss: plainText().max(500).optional(),
  error: plainText().max(200).optional(),
  error_description: plainText().max(1000).optional(),
});

/** Why a sign-in with the district's provider did not end in a session; the sign-in page explains it. */
export const districtSignInProblemQuerySchema = z.object({ ticket: plainText().min(1).max(2000) });
export const districtSignInProblemSchema = z.object({ message: z.string() }).meta({ id: 'DistrictSignInProblem' });
