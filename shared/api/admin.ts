import { z } from 'zod';
import { idSchema, isoDateSchema } from './errors.js';

export const adminLabSchema = z.object({
  id: idSchema,
  name: z.string(),
  /** number of members */
  members: z.number().int().min(0),
  /** number of runs */
  runs: z.number().int().min(0),
  createdAt: isoDateSchema,
});
export type AdminLab = z.infer<typeof adminLabSchema>;
export const adminLabsResponseSchema = z.object({ labs: z.array(adminLabSchema) });
export type AdminLabsResponse = z.infer<typeof adminLabsResponseSchema>;

export const adminUserSchema = z.object({
  id: idSchema,
  email: z.string(),
  name: z.string(),
  isAdmin: z.boolean(),
  /** names of the labs the user belongs to */
  labs: z.array(z.string()),
  createdAt: isoDateSchema,
});
export type AdminUser = z.infer<typeof adminUserSchema>;
export const adminUsersResponseSchema = z.object({ users: z.array(adminUserSchema) });
export type AdminUsersResponse = z.infer<typeof adminUsersResponseSchema>;
