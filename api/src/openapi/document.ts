import { z } from 'zod';
import { API_TOKEN_PREFIX, CSRF_HEADER, SESSION_COOKIE } from '../../../shared/api/auth.js';
import { apiErrorSchema } from '../../../shared/api/errors.js';
import { API_CATALOGUE, type Access, type Answer, type ApiRoute } from './catalogue.js';

type Json = Record<string, unknown>;

/** zod → JSON Schema (2020-12, the dialect of OpenAPI 3.1); requests as the client writes them, answers as sent. */
function schemaOf(schema: z.ZodType, io: 'input' | 'output'): Json {
  const out = z.toJSONSchema(schema, { io, unrepresentable: 'any', target: 'draft-2020-12' }) as Json;
  delete out.$schema;
  return out;
}

/** "/runs/:id/views/*path" → "/api/runs/{id}/views/{path}" */
export function openApiPath(expressPath: string): string {
  return `/api${expressPath.replace(/[:*]([A-Za-z_][A-Za-z0-9_]*)/g, '{$1}')}`;
}

const SECURITY: Record<Access, Json[] | undefined> = {
  public: [],
  // an empty requirement first: signing in is optional (it unlocks unpublished runs of one's lab)
  optional: [{}, { session: [] }, { token: [] }],
  user: [{ session: [] }, { token: [] }],
  admin: [{ session: [] }, { token: [] }],
};

function parameters(route: ApiRoute): Json[] {
  const out: Json[] = [];
  const add = (where: 'path' | 'query', shape: z.ZodObject) => {
    for (const [name, field] of Object.entries(shape.shape as Record<string, z.ZodType>)) {
      const schema = schemaOf(field, 'input');
      // a IIIF path spans several segments: documented as one string parameter containing "/"
      const isSplat = where === 'path' && route.path.includes(`*${name}`);
      out.push({
        name,
        in: where,
        required: where === 'path' || !field.safeParse(undefined).success,
        schema: isSplat ? { type: 'string', description: 'one to four segments joined by "/", e.g. 0,0,256,256/256,/0/default.png' } : schema,
      });
    }
  };
  if (route.params) add('path', route.params);
  if (route.query) add('query', route.query);
  return out;
}

function answer(status: number, a: Answer): Json {
  const description = status === 304 ? 'not modified (conditional GET with If-None-Match)' : status < 300 ? 'success' : 'see the body';
  if (a === null) return { description: status === 204 ? 'no content' : description };
  if ('media' in a && !(a instanceof z.ZodType)) {
    const types = typeof a.media === 'string' ? [a.media] : a.media;
    return { description: a.description, content: Object.fromEntries(types.map((m) => [m, { schema: m === 'application/json' ? { type: 'object' } : { type: 'string', format: 'binary' } }])) };
  }
  return { description, content: { 'application/json': { schema: schemaOf(a as z.ZodType, 'output') } } };
}

function operation(route: ApiRoute, errorSchema: Json): Json {
  const responses: Json = {};
  for (const [status, a] of Object.entries(route.responses)) responses[status] = answer(Number(status), a);
  responses['4XX'] = { description: 'bad input (400), not signed in (401), not allowed (403), not found (404), conflict (409), too large (413), wrong media type (415)', content: { 'application/json': { schema: errorSchema } } };
  const op: Json = {
    operationId: `${route.method}${route.path.replace(/[:*]/g, 'by-').replace(/[^A-Za-z0-9]+(.)?/g, (_m, c: string | undefined) => (c ? c.toUpperCase() : ''))}`,
    tags: [route.tag],
    summary: route.summary,
    ...(route.description ? { description: route.description } : {}),
    security: SECURITY[route.access],
    responses,
  };
  const params = parameters(route);
  if (params.length) op.parameters = params;
  if (route.body) {
    if ('media' in route.body && Array.isArray((route.body as { media: unknown }).media)) {
      const b = route.body as { media: readonly string[]; description: string };
      op.requestBody = { required: true, description: b.description, content: Object.fromEntries(b.media.map((m) => [m, { schema: { type: 'string', format: 'binary' } }])) };
    } else {
      op.requestBody = { required: true, content: { 'application/json': { schema: schemaOf(route.body as z.ZodType, 'input') } } };
    }
  }
  return op;
}

/**
 * The OpenAPI 3.1 document of the API, generated from the route catalogue and the shared zod schemas.
 * @example buildOpenApiDocument({ version: '0.1.0', publicUrl: 'http://127.0.0.1:5180' }).paths['/api/runs']
 */
export function buildOpenApiDocument(opts: { version: string; publicUrl: string; routes?: ApiRoute[] }): Json {
  const errorSchema = schemaOf(apiErrorSchema, 'output');
  const paths: Record<string, Json> = {};
  for (const route of opts.routes ?? API_CATALOGUE) {
    const p = openApiPath(route.path);
    paths[p] = { ...paths[p], [route.method]: operation(route, errorSchema) };
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Toppleworks API',
      version: opts.version,
      description: `Exact abelian sandpile runs, deep-zoom views and figures. Every action of the web app is a route here. Scripts authenticate with a personal API token (Authorization: Bearer ${API_TOKEN_PREFIX}…, created at POST /api/me/tokens); browsers use the session cookie and must echo the CSRF cookie in ${CSRF_HEADER} on writes.`,
    },
    servers: [{ url: opts.publicUrl.replace(/\/+$/, '') }],
    components: {
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: SESSION_COOKIE, description: `session cookie set by POST /api/auth/sign-in; writes also need the ${CSRF_HEADER} header` },
        token: { type: 'http', scheme: 'bearer', description: `personal API token (${API_TOKEN_PREFIX}…)` },
      },
      schemas: { ApiError: errorSchema },
    },
    paths,
  };
}
