import { z } from 'zod';

/** POST /api/uploads/background: the raw file is the body, typed application/octet-stream or image/png. */
export const UPLOAD_CONTENT_TYPES = ['application/octet-stream', 'image/png'] as const;
/** Largest accepted body. */
export const UPLOAD_MAX_BYTES = 64 * 1024 * 1024;
/** Largest extent of any axis, and of all cells together (the same bound as the CLI's PNG limit). */
export const UPLOAD_MAX_SIDE = 8192;
export const UPLOAD_MAX_CELLS = UPLOAD_MAX_SIDE * UPLOAD_MAX_SIDE;
/** The preview counts heights 0..UPLOAD_COUNTED_HEIGHTS−1 one by one, and all larger ones together. */
export const UPLOAD_COUNTED_HEIGHTS = 256;

export const sha256Schema = z.string().regex(/^[0-9a-f]{64}$/, 'must be a sha256 as 64 lower-case hex digits');

export const backgroundUploadSchema = z.object({
  /** content hash of the heights (int32 little-endian, C order); use it as background.sha256 */
  sha256: sha256Schema,
  /** array axis order: (W), (H, W) or (D, H, W); use it as background.shape */
  shape: z.array(z.number().int().min(1)).min(1).max(3),
  min: z.number().int().min(0),
  max: z.number().int().min(0),
  mean: z.number().min(0),
  /** what was sent: an .npy dtype such as "<u2", or "png" */
  source: z.string(),
  /** PNG uploads: the grey levels present, ascending; level k became height k */
  levels: z.array(z.number().int().min(0).max(255)).optional(),
  preview: z.object({
    /** heightCounts[h] = cells of height h, for h below 256 (trailing zeros dropped) */
    heightCounts: z.array(z.number().int().min(0)),
    /** cells of height 256 or more */
    countAbove: z.number().int().min(0),
  }),
  /** false when the same heights had been uploaded before (nothing new was stored) */
  created: z.boolean(),
});
export type BackgroundUpload = z.infer<typeof backgroundUploadSchema>;

export const uploadBackgroundQuerySchema = z.strictObject({
  /** the lab the upload is made for (the caller must be an author or manager there); default: active lab */
  labId: z.uuid({ message: 'must be an id (UUID)' }).optional(),
});
export const backgroundUploadParamsSchema = z.strictObject({ sha256: sha256Schema });
export const backgroundUploadResponseSchema = z.object({ upload: backgroundUploadSchema });
export type BackgroundUploadResponse = z.infer<typeof backgroundUploadResponseSchema>;
