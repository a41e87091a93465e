import { z } from 'zod';
import * as api from '../../../shared/api/index.js';
import { UPLOAD_CONTENT_TYPES } from '../../../shared/api/uploads.js';

/**
 * Every API route with the shared zod schemas it reads and answers, from which GET /api/openapi.json
 * is generated (openapi/document.ts). A test walks the mounted routers and fails when a route is
 * missing here, so the document cannot fall behind the code.
 */

export type Access = 'public' | 'optional' | 'user' | 'admin';
export type Media = { media: string | readonly string[]; description: string };
export type Answer = z.ZodType | Media | null;

export interface ApiRoute {
  method: 'get' | 'post' | 'put' | 'delete';
  /** Express path under /api, e.g. "/runs/:id" */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  access: Access;
  params?: z.ZodObject;
  query?: z.ZodObject;
  body?: z.ZodType | { media: readonly string[]; description: string };
  /** status → body schema (JSON), another media type, or null for no body */
  responses: Record<number, Answer>;
}

const ok = z.object({ ok: z.literal(true) });
const idParams = z.strictObject({ id: api.idSchema });
const tokenParams = z.strictObject({ token: api.mailedTokenSchema });
const tile: Media = {
  media: ['image/png', 'application/json'],
  description: 'a palette PNG (tile or whole-image size), or for info.json the IIIF Image API 3.0 level-0 description whose id is this view\'s public address',
};
const runPicture: Media = { media: 'image/png', description: 'the smallest whole image of the run\'s first drawn view its pyramid stores (longer side at most 256 px)' };
const figurePicture: Media = { media: ['image/jpeg', 'image/png'], description: 'the printed page shrunk to at most 256 px (JPEG), or before such a print the first panel\'s view (PNG)' };
const download: Media = { media: ['application/octet-stream', 'application/json'], description: 'the .npy array (NumPy format 1.0), or run.json' };
const events: Media = { media: 'text/event-stream', description: '`run` events with { run } on every change, then one `end` event' };
const tileNote = 'Path segments: IIIF region/size/rotation/quality.format, or info.json. Published runs are public and cached for a year; others are visible to their lab only.';

export const API_CATALOGUE: ApiRoute[] = [
  { method: 'get', path: '/health', tag: 'health', summary: 'Liveness and version', access: 'public', responses: { 200: api.healthResponseSchema } },
  { method: 'get', path: '/health/ready', tag: 'health', summary: 'Readiness of PostgreSQL and Redis', access: 'public', responses: { 200: api.readyResponseSchema, 503: api.readyResponseSchema } },

  { method: 'post', path: '/auth/sign-up', tag: 'auth', summary: 'Create an account and mail a verification link', access: 'public', body: api.signUpRequestSchema, responses: { 201: api.userResponseSchema } },
  { method: 'post', path: '/auth/verify-email', tag: 'auth', summary: 'Confirm an e-mail address with the mailed token', access: 'public', body: api.verifyEmailRequestSchema, responses: { 200: api.userResponseSchema } },
  { method: 'post', path: '/auth/verify-email/resend', tag: 'auth', summary: 'Mail a new verification link', access: 'user', responses: { 202: ok } },
  { method: 'post', path: '/auth/sign-in', tag: 'auth', summary: 'Sign in; sets the session and CSRF cookies', access: 'public', body: api.signInRequestSchema, responses: { 200: api.userResponseSchema } },
  { method: 'post', path: '/auth/sign-out', tag: 'auth', summary: 'End this session', access: 'user', responses: { 204: null } },
  { method: 'post', path: '/auth/password-reset', tag: 'auth', summary: 'Mail a password-reset link (always 202)', access: 'public', body: api.passwordResetRequestSchema, responses: { 202: ok } },
  { method: 'post', path: '/auth/password-reset/check', tag: 'auth', summary: 'Whether a mailed password-reset token still works, and until when (uses nothing)', access: 'public', body: api.passwordResetCheckRequestSchema, responses: { 200: api.passwordResetCheckResponseSchema } },
  { method: 'post', path: '/auth/password-reset/complete', tag: 'auth', summary: 'Set a new password with the mailed token', access: 'public', body: api.passwordResetCompleteRequestSchema, responses: { 200: api.userResponseSchema } },

  { method: 'get', path: '/me', tag: 'me', summary: 'The caller, their labs and the active lab, or { signedIn: false }', access: 'public', responses: { 200: api.meStateResponseSchema } },
  { method: 'put', path: '/me/active-lab', tag: 'me', summary: 'Choose the active lab', access: 'user', body: api.activeLabRequestSchema, responses: { 200: api.meResponseSchema } },
  { method: 'get', path: '/me/tokens', tag: 'me', summary: 'Personal API tokens', access: 'user', responses: { 200: api.tokensResponseSchema } },
  { method: 'post', path: '/me/tokens', tag: 'me', summary: 'Create a personal API token (the secret is shown once)', access: 'user', body: api.createTokenRequestSchema, responses: { 201: api.createTokenResponseSchema } },
  { method: 'delete', path: '/me/tokens/:id', tag: 'me', summary: 'Revoke a personal API token', access: 'user', params: idParams, responses: { 204: null } },

  { method: 'post', path: '/labs', tag: 'labs', summary: 'Create a lab; the caller becomes its manager', access: 'user', body: api.createLabRequestSchema, responses: { 201: api.labResponseSchema } },
  { method: 'get', path: '/labs/:labId', tag: 'labs', summary: 'A lab with its members and open invitations', access: 'user', params: api.labParamsSchema, responses: { 200: api.labDetailResponseSchema } },
  { method: 'post', path: '/labs/:labId/invitations', tag: 'labs', summary: 'Invite someone by e-mail (managers)', access: 'user', params: api.labParamsSchema, body: api.createInvitationRequestSchema, responses: { 201: api.invitationResponseSchema } },
  { method: 'delete', path: '/labs/:labId/invitations/:id', tag: 'labs', summary: 'Withdraw an invitation (managers)', access: 'user', params: api.labInvitationParamsSchema, responses: { 204: null } },
  { method: 'delete', path: '/labs/:labId/members/:userId', tag: 'labs', summary: 'Remove a member (managers) or leave the lab', access: 'user', params: api.labMemberParamsSchema, responses: { 204: null } },
  { method: 'put', path: '/labs/:labId/members/:userId/role', tag: 'labs', summary: 'Change a member\'s role, author ↔ manager, with a reason (managers and site admins; a lab keeps at least one manager)', access: 'user', params: api.labMemberParamsSchema, body: api.roleRequestSchema, responses: { 200: api.memberResponseSchema } },
  { method: 'put', path: '/labs/:labId/members/:userId/quota', tag: 'labs', summary: 'Set a member\'s monthly credit quota (managers)', access: 'user', params: api.labMemberParamsSchema, body: api.quotaRequestSchema, responses: { 200: api.memberResponseSchema } },

  { method: 'get', path: '/invitations/:token', tag: 'labs', summary: 'Preview an invitation', access: 'public', params: tokenParams, responses: { 200: api.invitationPreviewResponseSchema } },
  { method: 'post', path: '/invitations/:token/accept', tag: 'labs', summary: 'Accept an invitation sent to the caller\'s address', access: 'user', params: tokenParams, responses: { 200: api.labResponseSchema } },

  { method: 'get', path: '/runs', tag: 'runs', summary: 'A lab\'s runs, filtered, sorted and paginated on the server', access: 'user', query: api.listRunsQuerySchema, responses: { 200: api.listRunsResponseSchema } },
  { method: 'get', path: '/runs/:id', tag: 'runs', summary: 'One run with its state, progress and statistics', access: 'user', params: api.runParamsSchema, responses: { 200: api.runResponseSchema } },
  { method: 'post', path: '/runs', tag: 'runs', summary: 'Submit a run: recorded, then queued for the farm', access: 'user', body: api.createRunRequestSchema, responses: { 201: api.runResponseSchema } },
  { method: 'post', path: '/runs/:id/cancel', tag: 'runs', summary: 'Cancel a run (its author, a manager or an admin)', access: 'user', params: api.runParamsSchema, responses: { 200: api.runResponseSchema } },
  { method: 'post', path: '/runs/:id/rerun', tag: 'runs', summary: 'Submit the same specification again as a new run', access: 'user', params: api.runParamsSchema, body: api.rerunRequestSchema, responses: { 201: api.runResponseSchema } },
  { method: 'get', path: '/runs/:id/events', tag: 'runs', summary: 'Live progress as server-sent events', access: 'user', params: api.runParamsSchema, responses: { 200: events } },
  {
    method: 'get', path: '/runs/:id/views/:layer/:palette/iiif/*path', tag: 'artifacts', summary: 'Deep-zoom tiles and info.json of a run\'s view', description: tileNote, access: 'optional',
    params: api.runViewParamsSchema, responses: { 200: tile, 304: null },
  },
  {
    method: 'get', path: '/runs/:id/legend/:layer/:palette', tag: 'artifacts', summary: 'The legend of a drawn view: each height (or value range) with its colour, and the numbers of the colour scale', access: 'optional',
    description: 'Palette is a palette id, with ~clear when untoppled cells were drawn transparent. 404 for a view the run did not ask for or that is not drawn yet.',
    params: api.runLegendParamsSchema, responses: { 200: api.legendResponseSchema },
  },
  {
    method: 'get', path: '/runs/:id/thumbnail', tag: 'artifacts', summary: 'A small picture of a run for lists', access: 'optional',
    description: 'Same access as the run\'s tiles. 404 (not cached) until the view is drawn; 410 once the retention rule removed the run\'s artifacts.',
    params: api.runThumbnailParamsSchema, responses: { 200: runPicture, 304: null },
  },
  { method: 'get', path: '/runs/:id/arrays/:name', tag: 'artifacts', summary: 'Download a run\'s heights, odometer or run.json', access: 'optional', params: api.runArrayParamsSchema, responses: { 200: download, 304: null } },

  { method: 'post', path: '/series', tag: 'series', summary: 'One specification at several grain counts, as one run each', access: 'user', body: api.createSeriesRequestSchema, responses: { 201: api.seriesResponseSchema } },
  { method: 'get', path: '/series/:id', tag: 'series', summary: 'A series and its runs, by ascending grain count', access: 'user', params: api.seriesParamsSchema, responses: { 200: api.seriesResponseSchema } },

  {
    method: 'post', path: '/uploads/background', tag: 'uploads', summary: 'Upload a background array (.npy of any integer dtype, or 8-bit grayscale PNG)', access: 'user',
    description: 'The file is the raw body; its kind is read from its content. Stored as int32 .npy by content hash; use sha256 and shape in a run spec\'s background { kind: "array" }.',
    query: api.uploadBackgroundQuerySchema, body: { media: UPLOAD_CONTENT_TYPES, description: 'the .npy or PNG file' }, responses: { 201: api.backgroundUploadResponseSchema, 200: api.backgroundUploadResponseSchema },
  },
  { method: 'get', path: '/uploads/background/:sha256', tag: 'uploads', summary: 'Summary of an uploaded background', access: 'user', params: api.backgroundUploadParamsSchema, responses: { 200: api.backgroundUploadResponseSchema } },

  { method: 'post', path: '/estimates', tag: 'runs', summary: 'Predicted domain, memory, time and credits of a specification', description: 'Answers `{ estimate }`, or `{ refused }` with the reason for a run the machines cannot compute (its working memory beyond theirs; POST /api/runs refuses it with 400 in the same words). A specification that does not validate is a 400.', access: 'user', body: api.estimateRequestSchema, responses: { 200: api.estimateResponseSchema } },

  { method: 'get', path: '/figures', tag: 'figures', summary: 'Published figures', access: 'public', query: api.listFiguresQuerySchema, responses: { 200: api.listFiguresResponseSchema } },
  { method: 'get', path: '/figures/:slug', tag: 'figures', summary: 'A figure by its permanent slug (drafts for their lab only; withdrawn ones answer withdrawn: true)', access: 'optional', params: api.figureParamsSchema, responses: { 200: api.figureResponseSchema } },
  { method: 'get', path: '/labs/:labId/figures', tag: 'figures', summary: 'Every figure of a lab, drafts and withdrawn ones included', access: 'user', params: api.labFiguresParamsSchema, responses: { 200: api.labFiguresResponseSchema } },
  { method: 'post', path: '/figures', tag: 'figures', summary: 'Compose a figure from finished runs of a lab', access: 'user', body: api.createFigureRequestSchema, responses: { 201: api.figureResponseSchema } },
  { method: 'put', path: '/figures/:slug', tag: 'figures', summary: 'Change a figure\'s title, caption or composition', access: 'user', params: api.figureParamsSchema, body: api.updateFigureRequestSchema, responses: { 200: api.figureResponseSchema } },
  { method: 'post', path: '/figures/:slug/versions', tag: 'figures', summary: 'Order a print of the composition: a new version printed by the farm', access: 'user', params: api.figureParamsSchema, body: api.orderPrintRequestSchema, responses: { 202: api.figureVersionResponseSchema } },
  { method: 'post', path: '/figures/:slug/publish', tag: 'figures', summary: 'Publish a figure with a ready version', access: 'user', params: api.figureParamsSchema, responses: { 200: api.figureResponseSchema } },
  { method: 'post', path: '/figures/:slug/unpublish', tag: 'figures', summary: 'Withdraw a published figure; its link answers withdrawn', access: 'user', params: api.figureParamsSchema, responses: { 200: api.figureResponseSchema } },
  {
    method: 'get', path: '/figures/:slug/versions/:number/files/:format', tag: 'figures', summary: 'Download a printed file', access: 'optional',
    description: 'Answers 302 with a presigned object-store address that expires after an hour.', params: api.figureFileParamsSchema, responses: { 302: null },
  },
  {
    method: 'get', path: '/figures/:slug/views/:layer/:palette/iiif/*path', tag: 'artifacts', summary: 'Deep-zoom tiles and info.json of a figure\'s run', description: tileNote, access: 'optional',
    params: api.figureViewParamsSchema, responses: { 200: tile, 304: null },
  },
  {
    method: 'get', path: '/figures/:slug/legend/:layer/:palette', tag: 'artifacts', summary: 'The legend of a drawn view of a figure\'s run', access: 'optional',
    params: api.figureLegendParamsSchema, responses: { 200: api.legendResponseSchema },
  },
  {
    method: 'get', path: '/figures/:slug/thumbnail', tag: 'artifacts', summary: 'A small picture of a figure\'s printed page for lists', access: 'optional',
    description: 'A published figure shows everyone the page of its newest published version (cached publicly for an hour); a draft shows its lab the newest ready print. Before a print with a page thumbnail (nothing printed yet, or a print older than page thumbnails): the first panel\'s view.',
    params: api.figureThumbnailParamsSchema, responses: { 200: figurePicture, 304: null },
  },
  { method: 'get', path: '/figures/:slug/arrays/:name', tag: 'artifacts', summary: 'Download the arrays of a figure\'s run', access: 'optional', params: api.figureArrayParamsSchema, responses: { 200: download, 304: null } },

  { method: 'get', path: '/admin/labs', tag: 'admin', summary: 'Every lab with its usage (site admins)', access: 'admin', responses: { 200: api.adminLabsResponseSchema } },
  { method: 'get', path: '/admin/users', tag: 'admin', summary: 'Every user (site admins)', access: 'admin', responses: { 200: api.adminUsersResponseSchema } },
  { method: 'get', path: '/admin/usage', tag: 'admin', summary: 'Usage per lab and member by month, quota standing, balance history (site admins)', access: 'admin', query: api.adminUsageQuerySchema, responses: { 200: api.adminUsageResponseSchema } },
  { method: 'get', path: '/admin/usage.csv', tag: 'admin', summary: 'The usage as CSV: one row per lab and month, then per member and month', access: 'admin', query: api.adminUsageQuerySchema, responses: { 200: { media: 'text/csv', description: 'RFC 4180 CSV' } } },
  { method: 'put', path: '/admin/labs/:labId/allowance', tag: 'admin', summary: 'Set a lab\'s monthly free allowance, with a reason; this month\'s ledger follows at once', access: 'admin', params: api.labParamsSchema, body: api.allowanceRequestSchema, responses: { 200: api.adminLabStateResponseSchema } },
  { method: 'post', path: '/admin/labs/:labId/suspension', tag: 'admin', summary: 'Suspend a lab: its queued jobs leave the queue and its members cannot submit; nothing is deleted', access: 'admin', params: api.labParamsSchema, body: api.suspensionRequestSchema, responses: { 200: api.adminLabStateResponseSchema } },
  { method: 'post', path: '/admin/labs/:labId/reinstatement', tag: 'admin', summary: 'Reinstate a suspended lab and queue its waiting runs again', access: 'admin', params: api.labParamsSchema, body: api.suspensionRequestSchema, responses: { 200: api.adminLabStateResponseSchema } },
  { method: 'post', path: '/admin/labs/:labId/retention-notice', tag: 'admin', summary: 'Mail a lab\'s managers about unpublished runs near the end of their storage period', access: 'admin', params: api.labParamsSchema, responses: { 200: api.retentionNoticeResponseSchema } },
  { method: 'get', path: '/admin/farm', tag: 'admin', summary: 'Queue depths, live workers, running runs and failed jobs', access: 'admin', responses: { 200: api.farmHealthResponseSchema } },
  { method: 'post', path: '/admin/farm/jobs/:queue/:jobId/retry', tag: 'admin', summary: 'Retry a failed job (not charged again)', access: 'admin', params: api.farmJobParamsSchema, responses: { 200: api.retryJobResponseSchema } },
  { method: 'get', path: '/admin/storage', tag: 'admin', summary: 'Stored bytes per lab and run, with the retention rule for unpublished runs', access: 'admin', responses: { 200: api.adminStorageResponseSchema } },
  { method: 'get', path: '/admin/audit', tag: 'admin', summary: 'The audit trail, filtered by lab, person, kind and date', access: 'admin', query: api.auditQuerySchema, responses: { 200: api.auditResponseSchema } },
  { method: 'get', path: '/admin/audit.csv', tag: 'admin', summary: 'The filtered audit trail as CSV', access: 'admin', query: api.auditQuerySchema, responses: { 200: { media: 'text/csv', description: 'RFC 4180 CSV' } } },

  { method: 'get', path: '/dev/outbox', tag: 'dev', summary: 'Mails captured by the local mail fake (not in production)', access: 'public', responses: { 200: api.outboxResponseSchema } },
  { method: 'get', path: '/labs/:labId/credits', tag: 'credits', summary: 'Balance (available, reserved, free allowance left), packs, purchases and the caller\'s quota', access: 'user', params: api.labParamsSchema, responses: { 200: api.creditsSummaryResponseSchema } },
  { method: 'get', path: '/labs/:labId/credits/ledger', tag: 'credits', summary: 'The lab\'s ledger entries with every line, newest first', access: 'user', params: api.labParamsSchema, responses: { 200: api.ledgerResponseSchema } },
  { method: 'get', path: '/labs/:labId/credits/usage', tag: 'credits', summary: 'Credits used per month and member', access: 'user', params: api.labParamsSchema, responses: { 200: api.usageResponseSchema } },
  { method: 'get', path: '/labs/:labId/credits/usage.csv', tag: 'credits', summary: 'Credits used per month and member, as CSV', access: 'user', params: api.labParamsSchema, responses: { 200: { media: 'text/csv', description: 'RFC 4180 CSV, one row per month and member' } } },
  { method: 'get', path: '/labs/:labId/credits/purchases/:id', tag: 'credits', summary: 'One purchase and its receipt', access: 'user', params: api.purchaseParamsSchema, responses: { 200: api.purchaseResponseSchema } },
  { method: 'post', path: '/labs/:labId/credits/check', tag: 'credits', summary: 'Would a job of this many credits be accepted now (free allowance, balance, quota)?', access: 'user', params: api.labParamsSchema, body: api.creditCheckRequestSchema, responses: { 200: api.creditCheckResponseSchema } },
  { method: 'post', path: '/labs/:labId/credits/purchases/:id/abandon', tag: 'credits', summary: 'Give up a checkout not paid yet (managers): the provider closes it, nothing is charged', access: 'user', params: api.purchaseParamsSchema, responses: { 200: api.abandonPurchaseResponseSchema } },
  { method: 'post', path: '/labs/:labId/credits/checkout', tag: 'credits', summary: 'Start buying a credit pack (managers): a Checkout Session URL', access: 'user', params: api.labParamsSchema, body: api.checkoutRequestSchema, responses: { 201: api.checkoutResponseSchema } },
  { method: 'post', path: '/labs/:labId/credits/adjustments', tag: 'credits', summary: 'Grant or revoke credits with a reason (site admins)', access: 'admin', params: api.labParamsSchema, body: api.creditAdjustmentRequestSchema, responses: { 201: api.creditAdjustmentResponseSchema } },
  {
    method: 'post', path: '/payments/webhook', tag: 'credits', summary: 'Payment provider events (Stripe-Signature verified over the raw body)', access: 'public',
    body: { media: ['application/json'], description: 'a signed Stripe event' }, responses: { 200: api.webhookAckSchema },
  },
  { method: 'get', path: '/openapi.json', tag: 'meta', summary: 'This document', access: 'public', responses: { 200: { media: 'application/json', description: 'OpenAPI 3.1 document' } } },
];
