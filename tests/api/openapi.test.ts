import { Validator } from '@seriousme/openapi-schema-validator';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { API_ROUTERS } from '../../api/src/app.js';
import { openApiPath } from '../../api/src/openapi/document.js';
import { startHarness, type Harness } from './support/harness.js';

let h: Harness;
let doc: { openapi: string; paths: Record<string, Record<string, { security: unknown[]; requestBody?: unknown; responses: Record<string, unknown> }>>; components: { securitySchemes: Record<string, unknown> } };

beforeAll(async () => {
  h = await startHarness('openapi');
  const res = await h.http.get('/api/openapi.json').expect(200);
  expect(res.headers['content-type']).toMatch(/^application\/json/);
  doc = res.body;
});
afterAll(async () => {
  await h.close();
});

describe('GET /api/openapi.json', () => {
  it('is a valid OpenAPI 3.1 document', async () => {
    // checked against the official OpenAPI 3.1 JSON Schema by a general-purpose validator
    const result = await new Validator().validate(doc as unknown as Parameters<Validator['validate']>[0]);
    expect(result.errors ?? []).toEqual([]);
    expect(result.valid).toBe(true);
    expect(doc.openapi).toBe('3.1.0');
  });

  it('lists every route the app mounts, and nothing it does not', () => {
    const mounted: string[] = [];
    for (const build of Object.values(API_ROUTERS)) {
      const router = build(h.deps) as unknown as { stack: { route?: { path: string; methods: Record<string, boolean> } }[] };
      for (const layer of router.stack) {
        if (!layer.route) continue;
        for (const m of Object.keys(layer.route.methods)) mounted.push(`${m} ${openApiPath(layer.route.path)}`);
      }
    }
    const documented = Object.entries(doc.paths).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m} ${p}`));
    expect(mounted.filter((r) => !documented.includes(r))).toEqual([]);
    expect(documented.filter((r) => !mounted.includes(r))).toEqual([]);
  });

  it('gives every operation its own id', () => {
    const ids = Object.values(doc.paths).flatMap((ops) => Object.values(ops).map((op) => (op as unknown as { operationId: string }).operationId));
    // OpenAPI 3.1 specification, Operation Object: an operationId MUST be unique among all operations
    expect(new Set(ids).size).toBe(ids.length);
  });

  it('names the cookie and bearer schemes and uses them on signed-in routes', () => {
    expect(doc.components.securitySchemes).toMatchObject({
      session: { type: 'apiKey', in: 'cookie', name: 'tw_session' },
      token: { type: 'http', scheme: 'bearer' },
    });
    expect(doc.paths['/api/runs']!.post!.security).toEqual([{ session: [] }, { token: [] }]);
    expect(doc.paths['/api/figures']!.get!.security).toEqual([]);
  });

  it('carries the shared request and response schemas', () => {
    const create = doc.paths['/api/runs']!.post! as unknown as {
      requestBody: { content: { 'application/json': { schema: { required: string[]; properties: Record<string, { properties?: Record<string, unknown> }> } } } };
      responses: Record<string, { content?: Record<string, { schema: { properties: Record<string, unknown> } }> }>;
    };
    const body = create.requestBody.content['application/json'].schema;
    expect(body.required.sort()).toEqual(['labId', 'spec', 'title']);
    expect(Object.keys(body.properties.spec!.properties!).sort()).toEqual(['background', 'chips', 'lattice', 'render', 'sources']);
    expect(Object.keys(create.responses['201']!.content!['application/json']!.schema.properties)).toEqual(['run']);
    const upload = doc.paths['/api/uploads/background']!.post! as unknown as { requestBody: { content: Record<string, unknown> } };
    expect(Object.keys(upload.requestBody.content).sort()).toEqual(['application/octet-stream', 'image/png']);
    const tiles = doc.paths['/api/runs/{id}/views/{layer}/{palette}/iiif/{path}']!.get! as unknown as { parameters: { name: string; in: string }[] };
    expect(tiles.parameters.map((p) => `${p.in}:${p.name}`)).toEqual(['path:id', 'path:layer', 'path:palette', 'path:path']);
  });
});
