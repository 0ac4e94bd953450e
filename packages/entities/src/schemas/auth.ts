import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { roleGrantSchema, roleSchema } from './roles.js';
import { passwordSignInSchema } from './district-sign-in.js';

export const emailSchema = plainText().trim().toLowerCase().pipe(z.email({ message: 'Enter a valid e-mail address' }).max(254));

/** A new password: long enough to resist guessing, short enough for bcrypt's 72-byte input. */
export const newPasswordSchema = plainText()
  .min(10, 'Use at least 10 characters')
  .max(72, 'Use at most 72 characters');

export const loginRequestSchema = z.object({
  email: emailSchema,
  password: plainText().min(1, 'Enter your password').max(200),
});
export type LoginRequest = z.infer<typeof loginRequestSchema>;

export const sessionUserSchema = z
  .object({
    id: idSchema,
    email: z.string(),
    name: z.string(),
    /** Each grant, with the school's name for site-scoped ones. */
    roles: z.array(roleGrantSchema.extend({ siteName: z.string().nullable() })),
  })
  .meta({ id: 'SessionUser' });
export type SessionUser = z.infer<typeof sessionUserSchema>;

export const loginResponseSchema = z.object({
  user: sessionUserSchema,
  /** The same JWT as the session cookie, for integrations that send `Authorization: Bearer`. */
  token: z.string(),
});
export type LoginResponse = z.infer<typeof loginResponseSchema>;

export const meResponseSchema = z.object({ user: sessionUserSchema });

export const passwordResetRequestSchema = z.object({ email: emailSchema });

export const passwordResetConfirmSchema = z.object({
  token: plainText().min(20).max(200),
  password: newPasswordSchema,
});
export type PasswordResetConfirm = z.infer<typeof passwordResetConfirmSchema>;

/** The set-password form: the same rules plus a repeat the browser checks. */
export const setPasswordFormSchema = z
  .object({ password: newPasswordSchema, repeat: plainText() })
  .refine((v) => v.password === v.repeat, { path: ['repeat'], message: 'The two passwords differ' });

export const messageResponseSchema = z.object({ message: z.string() });

/** What the sign-in page may offer before anyone signs in. */
export const signInOptionsSchema = z
  .object({
    /** The seeded demo accounts and their shared password; null in production or when no demo account exists. */
    demo: z
      .object({
        password: z.string(),
        accounts: z.array(z.object({ email: z.string(), name: z.string(), role: roleSchema, siteName: z.string().nullable() })),
      })
      .nullable(),
    /** Whether "Sign in with your district account" is offered: the server has a district identity provider. */
    districtSignIn: z.boolean(),
    /** Who may still sign in with a password (the admin always may). */
    passwordSignIn: passwordSignInSchema,
  })
  .meta({ id: 'SignInOptions' });
export type SignInOptions = z.infer<typeof signInOptionsSchema>;
