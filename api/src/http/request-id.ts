import { randomUUID } from 'node:crypto';
import type { RequestHandler } from 'express';

const INCOMING = /^[A-Za-z0-9._-]{1,100}$/;

/** Every request gets an id, echoed in X-Request-Id and in error bodies, so a report can be found in the log. */
export const requestId: RequestHandler = (req, res, next) => {
  const given = req.get('x-request-id');
  const id = given && INCOMING.test(given) ? given : randomUUID();
  res.locals.requestId = id;
  res.setHeader('X-Request-Id', id);
  next();
};
