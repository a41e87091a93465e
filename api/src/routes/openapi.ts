import { readFileSync } from 'node:fs';
import { Router } from 'express';
import type { AppDeps } from '../deps.js';
import { buildOpenApiDocument } from '../openapi/document.js';

const VERSION: string = JSON.parse(readFileSync(new URL('../../../package.json', import.meta.url), 'utf8')).version;

export function openapiRouter({ env }: AppDeps): Router {
  const r = Router();
  // built once: the catalogue and the schemas do not change while the process runs
  const document = JSON.stringify(buildOpenApiDocument({ version: VERSION, publicUrl: env.PUBLIC_URL }));
  r.get('/openapi.json', (_req, res) => {
    res.set('Cache-Control', 'public, max-age=300').type('application/json').send(document);
  });
  return r;
}
