import { z } from 'zod';
import { passwordSchema, roleSchema, usernameSchema } from './auth';

export const userSchema = z.object({
  id: z.string(),
  username: z.string(),
  displayName: z.string(),
  roles: z.array(roleSchema),
  disabled: z.boolean(),
  lockedUntil: z.string().nullable(),
  lastSignInAt: z.string().nullable(),
  createdAt: z.string(),
});
export type User = z.infer<typeof userSchema>;

export const createUserSchema = z.object({
  username: usernameSchema,
  displayName: z.string().min(1).max(128),
  password: passwordSchema,
  roles: z.array(roleSchema).min(1),
});
export type CreateUser = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    displayName: z.string().min(1).max(128).optional(),
    roles: z.array(roleSchema).min(1).optional(),
    disabled: z.boolean().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'nothing to change');
export type UpdateUser = z.infer<typeof updateUserSchema>;

export const resetPasswordSchema = z.object({ password: passwordSchema });
