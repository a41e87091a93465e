import { z } from 'zod';
import { emailSchema, idSchema, isoDateSchema } from './errors.js';
import { labRoleSchema } from './auth.js';

export const labNameSchema = z.string().trim().min(2, 'lab name must be at least 2 characters').max(120, 'lab name must be at most 120 characters');

export const labSchema = z.object({ id: idSchema, name: z.string(), createdAt: isoDateSchema });
export type Lab = z.infer<typeof labSchema>;

export const createLabRequestSchema = z.strictObject({ name: labNameSchema });
export type CreateLabRequest = z.infer<typeof createLabRequestSchema>;
/** POST /api/labs (201) and POST /api/invitations/:token/accept (200) */
export const labResponseSchema = z.object({ lab: labSchema });
export type LabResponse = z.infer<typeof labResponseSchema>;

/** Monthly compute quota of one member in credits; null means no personal limit (the lab's balance still applies). */
export const monthlyQuotaSchema = z.number().int('quota must be a whole number of credits').min(0).max(1_000_000_000).nullable();

export const memberSchema = z.object({
  userId: idSchema,
  name: z.string(),
  email: z.string(),
  role: labRoleSchema,
  monthlyQuota: monthlyQuotaSchema,
  joinedAt: isoDateSchema,
});
export type Member = z.infer<typeof memberSchema>;

export const invitationSchema = z.object({
  id: idSchema,
  email: z.string(),
  role: labRoleSchema,
  createdAt: isoDateSchema,
  expiresAt: isoDateSchema,
});
export type Invitation = z.infer<typeof invitationSchema>;

/** GET /api/labs/:labId — invitations are listed only for managers (empty for authors). */
export const labDetailResponseSchema = z.object({
  lab: labSchema,
  members: z.array(memberSchema),
  invitations: z.array(invitationSchema),
});
export type LabDetailResponse = z.infer<typeof labDetailResponseSchema>;

export const labParamsSchema = z.strictObject({ labId: idSchema });
export const labMemberParamsSchema = z.strictObject({ labId: idSchema, userId: idSchema });
export const labInvitationParamsSchema = z.strictObject({ labId: idSchema, id: idSchema });

export const createInvitationRequestSchema = z.strictObject({ email: emailSchema, role: labRoleSchema });
export type CreateInvitationRequest = z.infer<typeof createInvitationRequestSchema>;
export const invitationResponseSchema = z.object({ invitation: invitationSchema });
export type InvitationResponse = z.infer<typeof invitationResponseSchema>;

/** GET /api/invitations/:token (public) */
export const invitationPreviewResponseSchema = z.object({
  labName: z.string(),
  email: z.string(),
  role: labRoleSchema,
  invitedBy: z.string(),
});
export type InvitationPreviewResponse = z.infer<typeof invitationPreviewResponseSchema>;

export const quotaRequestSchema = z.strictObject({ monthlyQuota: monthlyQuotaSchema });
export type QuotaRequest = z.infer<typeof quotaRequestSchema>;
/** PUT /api/labs/:labId/members/:userId/role (a manager of the lab or a site admin); the reason goes to the audit trail */
export const roleRequestSchema = z.strictObject({
  role: labRoleSchema,
  reason: z.string().trim().min(3, 'give a reason of at least 3 characters').max(500, 'the reason must be at most 500 characters'),
});
export type RoleRequest = z.infer<typeof roleRequestSchema>;
export const memberResponseSchema = z.object({ member: memberSchema });
export type MemberResponse = z.infer<typeof memberResponseSchema>;
