import type { Response } from 'express';
import type { z } from 'zod';

/** Parse the answer with its shared schema before sending: nothing outside the contract (say, a hash) can leak. */
export function respond<S extends z.ZodType>(res: Response, status: number, schema: S, body: z.input<S>): void {
  res.status(status).json(schema.parse(body));
}
