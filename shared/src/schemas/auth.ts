import { z } from 'zod';

/** Roles of people. A user may hold several. Devices are a separate principal (API key). */
export const roleSchema = z.enum(['admin', 'integrator', 'reviewer', 'operator']);
export type Role = z.infer<typeof roleSchema>;
export const ROLES = roleSchema.options;

export const usernameSchema = z
  .string()
  .min(3)
  .max(64)
  .regex(/^[a-z0-9._-]+$/, 'lower-case letters, digits, dot, dash and underscore only');

/** Minimal password policy: 12+ characters, not all one character class. */
export const passwordSchema = z
  .string()
  .min(12, 'at least 12 characters')
  .max(200)
  .refine((p) => /[a-zA-Z]/.test(p) && /[^a-zA-Z]/.test(p), 'mix letters with digits or symbols');

export const signInSchema = z.object({
  username: z.string().min(1).max(64),
  password: z.string().min(1).max(200),
});
export type SignIn = z.infer<typeof signInSchema>;

export const sessionUserSchema = z.object({
  id: z.string(),
  username: z.string(),
  displayName: z.string(),
  roles: z.array(roleSchema),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;

/** Answer of sign-in, renewal and GET /auth/session. */
export const sessionSchema = z.object({
  user: sessionUserSchema,
  /** Send back as the X-CSRF-Token header on every state-changing request. */
  csrfToken: z.string(),
  expiresAt: z.string(),
});
export type Session = z.infer<typeof sessionSchema>;
