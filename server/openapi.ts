// The API's OpenAPI 3 document, generated from the zod request schemas the routes parse (and zod
// descriptions of the main responses) with @asteasolutions/zod-to-openapi; served at /api/openapi.json.
// tests/app/openapi.test.ts validates it and checks that every Express route under /api is listed.
import { extendZodWithOpenApi, OpenAPIRegistry, OpenApiGeneratorV3, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import { Router } from 'express';
import { z } from 'zod';
import {
  archiveBodySchema,
  artSetUploadFieldsSchema,
  cardImageQuerySchema,
  cardListQuerySchema,
  createShareBodySchema,
  followBodySchema,
  OUTPUT_KINDS,
  ART_ENTRY_KINDS,
  recipeBodySchema,
  runListQuerySchema,
  runStateSchema,
  cardStateSchema,
  startRunBodySchema,
  type ArtSetDetail,
  type RunDetail,
  type RunSummary,
} from '../shared/api/runs.ts';
import { priceSheetBodySchema } from '../shared/api/price-sheets.ts';
import { signInSchema } from './routes/session.schema.ts';
import { acceptInviteSchema, changeRoleSchema, createInviteSchema } from './routes/workspaces.schema.ts';
import { createTokenBodySchema, createTokenResponseSchema, tokenListResponseSchema } from './routes/tokens.schema.ts';

// `.openapi('Name')` puts a schema under components/schemas and refers to it by $ref.
extendZodWithOpenApi(z);

// ---------- response schemas of the main objects (kept in step with shared/api/runs.ts by the checks below) ----------
const iso = z.string().meta({ format: 'date-time' });
const errorSchema = z
  .object({
    error: z.object({
      code: z.string().meta({ example: 'VALIDATION' }),
      message: z.string(),
      details: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
    }),
  })
  .openapi('Error');

const artSetDetailSchema = z
  .object({
    id: z.uuid(),
    name: z.string(),
    revision: z.number().int(),
    revisions: z.array(z.object({ revision: z.number().int(), createdAt: iso, entryCount: z.number().int(), sha256: z.string(), note: z.string().nullable() })),
    entries: z.array(
      z.object({
        path: z.string(),
        kind: z.enum(ART_ENTRY_KINDS),
        bytes: z.number().int(),
        sha256: z.string(),
        width: z.number().int().nullable(),
        height: z.number().int().nullable(),
        format: z.string().nullable(),
      }),
    ),
    skipped: z.array(z.object({ path: z.string(), reason: z.string() })),
  })
  .openapi('ArtSetDetail');

const runSummarySchema = z
  .object({
    id: z.uuid(),
    state: runStateSchema,
    recipe: z.object({ id: z.uuid(), name: z.string(), version: z.number().int() }),
    artSet: z.object({ id: z.uuid(), name: z.string(), revision: z.number().int() }),
    progress: z.object({ total: z.number().int(), done: z.number().int(), skipped: z.number().int(), failed: z.number().int(), cached: z.number().int() }),
    findings: z.object({ info: z.number().int(), warn: z.number().int(), error: z.number().int() }),
    createdAt: iso,
    startedAt: iso.nullable(),
    finishedAt: iso.nullable(),
    error: z.string().nullable(),
    createdBy: z.string().nullable(),
  })
  .openapi('RunSummary');

const runDetailSchema = runSummarySchema
  .extend({
    totals: z.object({ cards: z.number().int(), pages: z.number().int(), paddingAdded: z.number().int(), findingsByCode: z.record(z.string(), z.number().int()) }).nullable(),
    outputs: z.array(z.object({ name: z.string(), kind: z.enum(OUTPUT_KINDS), bytes: z.number().int() })),
    diff: z.object({ previousRunId: z.uuid().nullable(), added: z.array(z.string()), changed: z.array(z.string()), removed: z.array(z.string()), unchanged: z.number().int() }),
    following: z.boolean(),
  })
  .openapi('RunDetail');

const runCardSchema = z
  .object({
    id: z.uuid(),
    seq: z.number().int(),
    source: z.string(),
    role: z.enum(['front', 'back']),
    state: cardStateSchema,
    cached: z.boolean(),
    outputs: z.array(z.string()),
    sourcePx: z.object({ w: z.number().int(), h: z.number().int() }).nullable(),
    effectiveDpi: z.number().nullable(),
    turn: z.string().nullable(),
    fill: z.string().nullable(),
    findings: z.array(z.object({ code: z.string(), severity: z.enum(['info', 'warn', 'error']), message: z.string() }).loose()),
    deckOrder: z.number().int().nullable().describe("Fronts: 1-based place in the engine's print order, before copies; null for backs"),
    copies: z.number().int().nullable().describe('Fronts: copies in the deck (manifest copies, default 1; 0 leaves the card out); null for backs'),
    back: z.uuid().nullable().describe("Fronts: id of the back card printed on this card's reverse; null when none"),
  })
  .openapi('RunCard');

// Compile-time checks: a response schema that drifts from the type the routes answer with fails tsc.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const schemasMatch: [Same<z.infer<typeof artSetDetailSchema>, ArtSetDetail>, Same<z.infer<typeof runSummarySchema>, RunSummary>, Same<z.infer<typeof runDetailSchema>, RunDetail>] = [true, true, true];
void schemasMatch;

/** Any JSON object: responses not described field by field yet. */
const anyObject = z.object({}).loose();

// ---------- paths ----------
type Auth = 'public' | 'session' | 'member';
interface Doc {
  method: RouteConfig['method'];
  path: string;
  summary: string;
  tag: string;
  auth: Auth;
  params?: string[];
  query?: z.ZodObject;
  body?: z.ZodType;
  multipart?: z.ZodType;
  status?: number;
  response?: z.ZodType | { file: string };
  /** Rate limited: documents the 429 answer with its Retry-After header. */
  limited?: boolean;
}

const ws = '/workspaces/{workspaceId}';
const DOCS: Doc[] = [
  { method: 'get', path: '/health', summary: 'Database and queue health (503 when either is down)', tag: 'health', auth: 'public', response: anyObject },
  { method: 'get', path: '/openapi.json', summary: 'This document', tag: 'health', auth: 'public', response: anyObject },
  { method: 'get', path: '/session', summary: 'Who is signed in, and the CSRF token for writes', tag: 'session', auth: 'public', response: anyObject },
  { method: 'post', path: '/session', summary: 'Sign in', tag: 'session', auth: 'public', body: signInSchema, response: anyObject, limited: true },
  { method: 'delete', path: '/session', summary: 'Sign out', tag: 'session', auth: 'public', status: 204 },
  { method: 'get', path: '/workspaces', summary: 'Workspaces of the signed-in account', tag: 'workspaces', auth: 'session', response: anyObject },
  { method: 'get', path: `${ws}`, summary: 'One workspace', tag: 'workspaces', auth: 'member', response: anyObject },
  { method: 'get', path: `${ws}/members`, summary: 'Members and roles', tag: 'workspaces', auth: 'member', response: anyObject },
  { method: 'patch', path: `${ws}/members/{userId}`, summary: 'Change a role (owners)', tag: 'workspaces', auth: 'member', params: ['userId'], body: changeRoleSchema, response: anyObject },
  { method: 'delete', path: `${ws}/members/{userId}`, summary: 'Remove a member (owners)', tag: 'workspaces', auth: 'member', params: ['userId'], status: 204 },
  { method: 'get', path: `${ws}/invites`, summary: 'Open invitations (owners)', tag: 'workspaces', auth: 'member', response: anyObject },
  { method: 'post', path: `${ws}/invites`, summary: 'Invite by e-mail (owners)', tag: 'workspaces', auth: 'member', body: createInviteSchema, status: 201, response: anyObject },
  { method: 'delete', path: `${ws}/invites/{inviteId}`, summary: 'Withdraw an invitation (owners)', tag: 'workspaces', auth: 'member', params: ['inviteId'], status: 204 },
  { method: 'get', path: '/invites/{token}', summary: 'An invitation, by its link', tag: 'workspaces', auth: 'public', params: ['token'], response: anyObject },
  { method: 'post', path: '/invites/{token}/accept', summary: 'Accept an invitation', tag: 'workspaces', auth: 'public', params: ['token'], body: acceptInviteSchema, response: anyObject },
  { method: 'get', path: `${ws}/mail`, summary: 'Captured demo mail (owners)', tag: 'workspaces', auth: 'member', response: anyObject },
  { method: 'get', path: `${ws}/price-sheets`, summary: 'Price sheets', tag: 'price sheets', auth: 'member', response: anyObject },
  { method: 'post', path: `${ws}/price-sheets`, summary: 'Add a price sheet', tag: 'price sheets', auth: 'member', body: priceSheetBodySchema, status: 201, response: anyObject },
  { method: 'get', path: `${ws}/price-sheets/{priceSheetId}`, summary: 'One price sheet', tag: 'price sheets', auth: 'member', params: ['priceSheetId'], response: anyObject },
  { method: 'patch', path: `${ws}/price-sheets/{priceSheetId}`, summary: 'Replace a price sheet', tag: 'price sheets', auth: 'member', params: ['priceSheetId'], body: priceSheetBodySchema, response: anyObject },
  { method: 'delete', path: `${ws}/price-sheets/{priceSheetId}`, summary: 'Delete a price sheet', tag: 'price sheets', auth: 'member', params: ['priceSheetId'], status: 204 },
  { method: 'get', path: `${ws}/recipes`, summary: 'Recipes', tag: 'recipes', auth: 'member', query: z.object({ archived: z.enum(['true', 'false']).optional() }), response: anyObject },
  { method: 'post', path: `${ws}/recipes`, summary: 'Create a recipe', tag: 'recipes', auth: 'member', body: recipeBodySchema, status: 201, response: anyObject },
  { method: 'get', path: `${ws}/recipes/{recipeId}`, summary: 'One recipe with its versions', tag: 'recipes', auth: 'member', params: ['recipeId'], response: anyObject },
  { method: 'put', path: `${ws}/recipes/{recipeId}`, summary: 'Save a new version', tag: 'recipes', auth: 'member', params: ['recipeId'], body: recipeBodySchema, response: anyObject },
  { method: 'get', path: `${ws}/recipes/{recipeId}/versions/{version}`, summary: 'One saved version', tag: 'recipes', auth: 'member', params: ['recipeId', 'version'], response: anyObject },
  { method: 'post', path: `${ws}/recipes/{recipeId}/duplicate`, summary: 'Duplicate a recipe', tag: 'recipes', auth: 'member', params: ['recipeId'], status: 201, response: anyObject },
  { method: 'post', path: `${ws}/recipes/{recipeId}/archive`, summary: 'Archive or restore', tag: 'recipes', auth: 'member', params: ['recipeId'], body: archiveBodySchema, response: anyObject },
  { method: 'get', path: `${ws}/art-sets`, summary: 'Art sets', tag: 'art sets', auth: 'member', response: anyObject },
  {
    method: 'post',
    path: `${ws}/art-sets`,
    summary: 'Upload a zip of card art (200 with deduplicated: true when the same bytes are already here)',
    tag: 'art sets',
    auth: 'member',
    multipart: artSetUploadFieldsSchema.extend({ file: z.string().meta({ format: 'binary' }) }),
    status: 201,
    response: z.object({ artSet: artSetDetailSchema, deduplicated: z.boolean() }),
  },
  { method: 'get', path: `${ws}/art-sets/{artSetId}`, summary: 'One art set revision', tag: 'art sets', auth: 'member', params: ['artSetId'], query: z.object({ revision: z.number().int().min(1).optional() }), response: z.object({ artSet: artSetDetailSchema }) },
  { method: 'get', path: `${ws}/art-sets/{artSetId}/revisions/{revision}/thumbnail`, summary: 'Thumbnail of one entry (webp)', tag: 'art sets', auth: 'member', params: ['artSetId', 'revision'], query: z.object({ path: z.string() }), response: { file: 'image/webp' } },
  {
    method: 'post',
    path: `${ws}/art-sets/{artSetId}/files`,
    summary: 'Add or replace single images (a new revision)',
    tag: 'art sets',
    auth: 'member',
    params: ['artSetId'],
    multipart: z.object({ files: z.array(z.string().meta({ format: 'binary' })) }),
    status: 201,
    response: z.object({ artSet: artSetDetailSchema }),
  },
  { method: 'get', path: `${ws}/runs`, summary: 'Recent runs', tag: 'runs', auth: 'member', query: runListQuerySchema, response: z.object({ runs: z.array(runSummarySchema) }) },
  { method: 'post', path: `${ws}/runs`, summary: 'Start a run', tag: 'runs', auth: 'member', body: startRunBodySchema, status: 201, response: z.object({ run: runDetailSchema }) },
  { method: 'get', path: `${ws}/runs/{runId}`, summary: 'One run: state, progress, outputs (poll until done, failed or canceled)', tag: 'runs', auth: 'member', params: ['runId'], response: z.object({ run: runDetailSchema }) },
  { method: 'get', path: `${ws}/runs/{runId}/events`, summary: 'Server-sent events: the run detail once a second until it ends', tag: 'runs', auth: 'member', params: ['runId'], response: { file: 'text/event-stream' } },
  { method: 'get', path: `${ws}/runs/{runId}/cards`, summary: 'The cards of a run', tag: 'runs', auth: 'member', params: ['runId'], query: cardListQuerySchema, response: z.object({ cards: z.array(runCardSchema) }) },
  { method: 'get', path: `${ws}/guide`, summary: "First-run guide steps the caller has done here (a card opened at full size, a combined PDF downloaded)", tag: 'runs', auth: 'member', response: z.object({ guide: z.object({ proofChecked: z.boolean(), pdfDownloaded: z.boolean() }) }) },
  { method: 'get', path: `${ws}/runs/{runId}/cards/{cardId}/image`, summary: 'A conformed card (png) or its thumbnail (webp)', tag: 'runs', auth: 'member', params: ['runId', 'cardId'], query: cardImageQuerySchema, response: { file: 'image/*' } },
  { method: 'post', path: `${ws}/runs/{runId}/cancel`, summary: 'Cancel a run', tag: 'runs', auth: 'member', params: ['runId'], response: z.object({ run: runDetailSchema }) },
  { method: 'post', path: `${ws}/runs/{runId}/follow`, summary: 'Get (or stop) the end-of-run mail', tag: 'runs', auth: 'member', params: ['runId'], body: followBodySchema, response: z.object({ run: runDetailSchema }) },
  { method: 'get', path: `${ws}/runs/{runId}/files/{name}`, summary: 'Download an output (302 to a short-lived URL when object storage is on)', tag: 'runs', auth: 'member', params: ['runId', 'name'], response: { file: 'application/octet-stream' } },
  { method: 'get', path: `${ws}/runs/{runId}/shares`, summary: 'Share links of a run', tag: 'shares', auth: 'member', params: ['runId'], response: anyObject },
  { method: 'post', path: `${ws}/runs/{runId}/shares`, summary: 'Make a share link', tag: 'shares', auth: 'member', params: ['runId'], body: createShareBodySchema, status: 201, response: anyObject },
  { method: 'delete', path: `${ws}/runs/{runId}/shares/{shareId}`, summary: 'Revoke a share link', tag: 'shares', auth: 'member', params: ['runId', 'shareId'], status: 204 },
  { method: 'get', path: '/share/{token}', summary: 'A shared run, by its link', tag: 'shares', auth: 'public', params: ['token'], response: anyObject },
  { method: 'get', path: '/share/{token}/files/{name}', summary: 'Download a shared file', tag: 'shares', auth: 'public', params: ['token', 'name'], response: { file: 'application/octet-stream' } },
  { method: 'get', path: `${ws}/tokens`, summary: 'Your API tokens here (signed in only)', tag: 'tokens', auth: 'session', response: tokenListResponseSchema },
  { method: 'post', path: `${ws}/tokens`, summary: 'Make an API token; the secret is in this answer only', tag: 'tokens', auth: 'session', body: createTokenBodySchema, status: 201, response: createTokenResponseSchema },
  { method: 'delete', path: `${ws}/tokens/{tokenId}`, summary: 'Revoke an API token', tag: 'tokens', auth: 'session', params: ['tokenId'], status: 204 },
];

/** The documented routes, as `METHOD /api/path/{param}` (the test compares them with Express's). */
export const DOCUMENTED_ROUTES = DOCS.map((d) => `${d.method.toUpperCase()} /api${d.path}`);

function buildDocument() {
  const registry = new OpenAPIRegistry();
  const bearer = registry.registerComponent('securitySchemes', 'bearerToken', {
    type: 'http',
    scheme: 'bearer',
    description: 'An API token (`bw_...`) made on the Tokens page; acts with your role in its workspace. No CSRF header needed.',
  });
  const cookie = registry.registerComponent('securitySchemes', 'sessionCookie', {
    type: 'apiKey',
    in: 'cookie',
    name: 'bw.sid',
    description: 'Browser session; writes also need the X-CSRF-Token header from GET /api/session.',
  });
  for (const d of DOCS) {
    const params = d.path.includes('{workspaceId}') ? ['workspaceId', ...(d.params ?? [])] : (d.params ?? []);
    const request: RouteConfig['request'] = {};
    if (params.length) request.params = z.object(Object.fromEntries(params.map((p) => [p, z.string()])));
    if (d.query) request.query = d.query;
    if (d.body) request.body = { required: true, content: { 'application/json': { schema: d.body } } };
    if (d.multipart) request.body = { required: true, content: { 'multipart/form-data': { schema: d.multipart } } };
    const status = d.status ?? 200;
    const ok =
      status === 204 || !d.response
        ? { description: 'Done' }
        : 'file' in d.response
          ? { description: 'The file', content: { [d.response.file as string]: { schema: z.string().meta({ format: 'binary' }) } } }
          : { description: 'OK', content: { 'application/json': { schema: d.response as z.ZodType } } };
    const errors = { description: 'An error with a stable code', content: { 'application/json': { schema: errorSchema } } };
    registry.registerPath({
      method: d.method,
      path: `/api${d.path}`,
      summary: d.summary,
      tags: [d.tag],
      security: d.auth === 'public' ? [] : d.auth === 'session' ? [{ [cookie.name]: [] }] : [{ [bearer.name]: [] }, { [cookie.name]: [] }],
      request,
      responses: {
        [status]: ok,
        ...(d.limited
          ? {
              429: {
                description: 'Too many failed attempts (code TOO_MANY_ATTEMPTS); try again after Retry-After seconds',
                headers: { 'Retry-After': { description: 'Seconds until the next attempt is counted', schema: { type: 'integer' } } },
                content: { 'application/json': { schema: errorSchema } },
              },
            }
          : {}),
        default: errors,
      },
    });
  }
  return new OpenApiGeneratorV3(registry.definitions).generateDocument({
    openapi: '3.0.3',
    info: { title: 'Bleedwright API', version: '1', description: 'Card art to print-ready files. Errors answer `{ error: { code, message } }`.' },
    servers: [{ url: '/' }],
  });
}

let cached: ReturnType<typeof buildDocument> | null = null;

/** The document (built once per process). */
export function openApiDocument() {
  cached ??= buildDocument();
  return cached;
}

/** Mounted at /api/openapi.json: anyone may read it (it holds no data). */
export function openApiRoutes(): Router {
  const router = Router();
  router.get('/', (_req, res) => {
    res.json(openApiDocument());
  });
  return router;
}
