import { z } from 'zod';
import { emailSchema, idSchema, isoDateSchema } from './errors.js';

export const PASSWORD_MIN_LENGTH = 10;
export const passwordSchema = z
  .string()
  .min(PASSWORD_MIN_LENGTH, `password must be at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(256, 'password must be at most 256 characters');

/** Mailed tokens (verification, reset, invitation): URL-safe base64 of 32 random bytes. */
export const mailedTokenSchema = z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, 'not a valid token');

export const userSchema = z.object({
  id: idSchema,
  email: z.string(),
  name: z.string(),
  emailVerified: z.boolean(),
  isAdmin: z.boolean(),
});
export type User = z.infer<typeof userSchema>;
export const userResponseSchema = z.object({ user: userSchema });
export type UserResponse = z.infer<typeof userResponseSchema>;

export const signUpRequestSchema = z.strictObject({
  email: emailSchema,
  password: passwordSchema,
  name: z.string().trim().min(1, 'name is required').max(120, 'name must be at most 120 characters'),
});
export type SignUpRequest = z.infer<typeof signUpRequestSchema>;

export const verifyEmailRequestSchema = z.strictObject({ token: mailedTokenSchema });
export type VerifyEmailRequest = z.infer<typeof verifyEmailRequestSchema>;

export const signInRequestSchema = z.strictObject({
  email: emailSchema,
  password: z.string().min(1, 'password is required').max(256),
});
export type SignInRequest = z.infer<typeof signInRequestSchema>;

export const passwordResetRequestSchema = z.strictObject({ email: emailSchema });
export type PasswordResetRequest = z.infer<typeof passwordResetRequestSchema>;

export const passwordResetCompleteRequestSchema = z.strictObject({ token: mailedTokenSchema, password: passwordSchema });
export type PasswordResetCompleteRequest = z.infer<typeof passwordResetCompleteRequestSchema>;

/**
 * POST /api/auth/password-reset/check: whether a mailed reset link still works, asked when the page
 * opens so a dead link is said at once rather than after the new password is typed. It uses nothing
 * and names no account: the holder of the token learns only its state.
 */
export const passwordResetCheckRequestSchema = z.strictObject({ token: mailedTokenSchema });
export type PasswordResetCheckRequest = z.infer<typeof passwordResetCheckRequestSchema>;
/** Why a mailed link no longer works: never issued (or mistyped), already used (or outdone by a later reset), or past its time. */
/**
 * How long each kind of mailed link works, in hours: the API stamps tokens with it and the mails
 * and pages say it, so the words cannot drift from the rule.
 */
export const MAILED_LINK_HOURS = { verify_email: 48, reset_password: 1 } as const;
export type MailedLinkPurpose = keyof typeof MAILED_LINK_HOURS;

/** "one hour", "48 hours": a mailed link's lifetime in words. */
export function mailedLinkLifetime(purpose: MailedLinkPurpose): string {
  const h = MAILED_LINK_HOURS[purpose];
  return h === 1 ? 'one hour' : `${h} hours`;
}

export const MAILED_LINK_REFUSALS = ['unknown', 'used', 'expired'] as const;
export const mailedLinkRefusalSchema = z.enum(MAILED_LINK_REFUSALS);
export type MailedLinkRefusal = z.infer<typeof mailedLinkRefusalSchema>;
export const passwordResetCheckResponseSchema = z.discriminatedUnion('usable', [
  z.object({ usable: z.literal(true), expiresAt: isoDateSchema }),
  z.object({ usable: z.literal(false), reason: mailedLinkRefusalSchema }),
]);
export type PasswordResetCheckResponse = z.infer<typeof passwordResetCheckResponseSchema>;

export const LAB_ROLES = ['author', 'manager'] as const;
export const labRoleSchema = z.enum(LAB_ROLES);
export type LabRole = z.infer<typeof labRoleSchema>;

/** GET /api/me for a signed-in caller, and PUT /api/me/active-lab */
export const meResponseSchema = z.object({
  signedIn: z.literal(true),
  user: userSchema,
  labs: z.array(z.object({ id: idSchema, name: z.string(), role: labRoleSchema })),
  activeLabId: idSchema.nullable(),
});
export type MeResponse = z.infer<typeof meResponseSchema>;

/**
 * GET /api/me: the caller, or that nobody is signed in. Every page asks it, public ones too, so "not
 * signed in" is an answer (200) rather than an error; a bad bearer token is still a 401.
 */
export const meStateResponseSchema = z.discriminatedUnion('signedIn', [meResponseSchema, z.object({ signedIn: z.literal(false) })]);
export type MeStateResponse = z.infer<typeof meStateResponseSchema>;

export const activeLabRequestSchema = z.strictObject({ labId: idSchema });
export type ActiveLabRequest = z.infer<typeof activeLabRequestSchema>;

/** Personal API tokens: `Authorization: Bearer tw_...`. */
export const API_TOKEN_PREFIX = 'tw_';
export const apiTokenSchema = z.object({
  id: idSchema,
  label: z.string(),
  createdAt: isoDateSchema,
  lastUsedAt: isoDateSchema.nullable(),
  /** the first characters of the secret, so a user can tell tokens apart */
  prefix: z.string(),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;
export const tokensResponseSchema = z.object({ tokens: z.array(apiTokenSchema) });
export type TokensResponse = z.infer<typeof tokensResponseSchema>;

export const createTokenRequestSchema = z.strictObject({
  label: z.string().trim().min(1, 'label is required').max(80, 'label must be at most 80 characters'),
});
export type CreateTokenRequest = z.infer<typeof createTokenRequestSchema>;
/** The secret is shown once; only its hash is stored. */
export const createTokenResponseSchema = z.object({ token: apiTokenSchema, secret: z.string().startsWith(API_TOKEN_PREFIX) });
export type CreateTokenResponse = z.infer<typeof createTokenResponseSchema>;

/** Cookie and header names of the session. */
export const SESSION_COOKIE = 'tw_session';
export const CSRF_COOKIE = 'tw_csrf';
export const CSRF_HEADER = 'X-CSRF-Token';
