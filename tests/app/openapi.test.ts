// The OpenAPI document at /api/openapi.json: valid OpenAPI 3 (checked with @apidevtools/swagger-parser
// against the official OpenAPI 3.0 JSON schema), generated from the zod schemas, and listing exactly
// the routes Express serves.
import SwaggerParser from '@apidevtools/swagger-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { createApp } from '../../server/app.ts';
import { startTestServer } from './fixtures.ts';
import { listApiRoutes } from './access-table.ts';
import { IpClient, loopbackIp } from './ip-client.ts';

let server: RunningServer;
let doc: any;

beforeAll(async () => {
  server = await startTestServer();
  const res = await fetch(`${server.url}/api/openapi.json`);
  expect(res.status).toBe(200);
  expect(res.headers.get('content-type')).toContain('application/json');
  doc = await res.json();
});
afterAll(() => server?.close());

describe('/api/openapi.json', () => {
  it('is a valid OpenAPI 3 document', async () => {
    expect(doc.openapi).toMatch(/^3\.0\.\d$/);
    await expect(SwaggerParser.validate(structuredClone(doc))).resolves.toBeTruthy();
  });

  it('lists every route Express serves under /api, and no other', () => {
    const served = listApiRoutes(createApp(server.deps)).map((r) => `${r.method} ${r.path.replace(/:([A-Za-z]+)/g, '{$1}')}`);
    const documented = Object.entries(doc.paths as Record<string, Record<string, unknown>>).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${p}`));
    expect([...new Set(documented)].sort()).toEqual([...new Set(served)].sort());
  });

  it('takes request bodies from the zod schemas the routes parse', () => {
    const start = doc.paths['/api/workspaces/{workspaceId}/runs'].post.requestBody.content['application/json'].schema;
    expect(start.required).toEqual(expect.arrayContaining(['recipeId', 'artSetId']));
    expect(start.properties.revision).toMatchObject({ type: 'integer', minimum: 1 });
    const share = doc.paths['/api/workspaces/{workspaceId}/runs/{runId}/shares'].post.requestBody.content['application/json'].schema;
    expect(share.properties.expiresInHours).toMatchObject({ minimum: 1, maximum: 720 });
    const upload = doc.paths['/api/workspaces/{workspaceId}/art-sets'].post.requestBody.content['multipart/form-data'].schema;
    expect(upload.properties.file).toMatchObject({ type: 'string', format: 'binary' });
  });

  it('describes bearer tokens and the run object a script polls', () => {
    expect(doc.components.securitySchemes.bearerToken).toMatchObject({ type: 'http', scheme: 'bearer' });
    expect(Object.keys(doc.components.schemas)).toEqual(expect.arrayContaining(['RunDetail', 'RunSummary', 'ArtSetDetail', 'Error']));
    expect(doc.components.schemas.RunSummary.properties.state.enum).toEqual(['queued', 'running', 'done', 'failed', 'canceled']);
    const poll = doc.paths['/api/workspaces/{workspaceId}/runs/{runId}'].get;
    expect(poll.security).toEqual(expect.arrayContaining([{ bearerToken: [] }]));
    expect(JSON.stringify(poll.responses['200'])).toContain('#/components/schemas/RunDetail');
  });

  it('documents the sign-in rate limit: 429 with Retry-After', async () => {
    const signIn = doc.paths['/api/session'].post.responses['429'];
    expect(signIn.headers['Retry-After'].schema).toEqual({ type: 'integer' });
    // And the server answers the same way once the limit is reached (from an address of its own, so
    // no other test's client is held off).
    const client = await IpClient.open(server.url, loopbackIp());
    let res = await client.signIn('nobody-openapi@example.test', 'wrong-password-1');
    for (let i = 0; i < 30 && res.status !== 429; i++) res = await client.signIn('nobody-openapi@example.test', 'wrong-password-1');
    expect(res.status).toBe(429);
    expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
    expect(res.body.error.code).toBe('TOO_MANY_ATTEMPTS');
  });
});
