import { randomUUID } from 'node:crypto';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import express, { type Express } from 'express';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import type { AppDeps } from './context.ts';
import { errorHandler, notFoundHandler } from './errors.ts';
import { bearerAuth, csrfProtection } from './middleware/auth.ts';
import { tokenRoutes } from './routes/tokens.ts';
import { openApiRoutes } from './openapi.ts';
import { healthRoutes } from './routes/health.ts';
import { memberRoutes } from './routes/members.ts';
import { mailRoutes } from './routes/mail.ts';
import { publicInviteRoutes, workspaceInviteRoutes } from './routes/invites.ts';
import { SESSION_COOKIE, sessionRoutes } from './routes/session.ts';
import { workspaceRoutes } from './routes/workspaces.ts';
import { priceSheetRoutes } from './routes/price-sheets.ts';
import { recipeRoutes } from './routes/recipes.ts';
import { artSetRoutes } from './routes/art-sets.ts';
import { runRoutes } from './routes/runs.ts';
import { guideRoutes } from './routes/guide.ts';
import { publicShareRoutes } from './routes/shares.ts';

const SESSION_DAYS = 14;
const REQUEST_ID = /^[A-Za-z0-9._-]{1,100}$/;

/** The whole HTTP app: API under /api and, when built, the client from the same origin. */
export function createApp(deps: AppDeps): Express {
  const app = express();
  app.disable('x-powered-by');
  if (deps.config.trustProxy) app.set('trust proxy', 1);

  app.use(
    pinoHttp({
      logger: deps.logger,
      // Keep a caller's request id (so logs line up across services), else make one; echo it back.
      genReqId(req, res) {
        const sent = req.headers['x-request-id'];
        const id = typeof sent === 'string' && REQUEST_ID.test(sent) ? sent : randomUUID();
        res.setHeader('X-Request-Id', id);
        return id;
      },
      autoLogging: { ignore: (req) => !req.url?.startsWith('/api') },
      // One short line per request: no headers (they carry the session cookie).
      serializers: {
        req: (req: { id: string; method: string; url: string }) => ({ id: req.id, method: req.method, url: req.url }),
        res: (res: { statusCode: number }) => ({ status: res.statusCode }),
      },
    }),
  );

  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'"],
          fontSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
        },
      },
      strictTransportSecurity: deps.config.cookieSecure,
    }),
  );

  const api = express.Router();
  api.use(express.json({ limit: '100kb' }));
  const PgStore = connectPgSimple(session);
  api.use(bearerAuth(deps.db, deps.clock));
  const sessions = session({
    name: SESSION_COOKIE,
    store: new PgStore({ pool: deps.sessionPool, tableName: 'sessions', createTableIfMissing: false, pruneSessionInterval: 15 * 60 }),
    secret: deps.config.sessionSecret,
    resave: false,
    saveUninitialized: false,
    cookie: { httpOnly: true, sameSite: 'lax', secure: deps.config.cookieSecure, maxAge: SESSION_DAYS * 24 * 3600 * 1000, path: '/' },
  });
  // Token requests carry no session: no store lookup, no cookie.
  api.use((req, res, next) => (req.apiToken ? next() : sessions(req, res, next)));
  api.use(csrfProtection);
  api.use('/openapi.json', openApiRoutes());
  api.use('/health', healthRoutes(deps));
  api.use('/session', sessionRoutes(deps));
  api.use('/invites', publicInviteRoutes(deps));
  api.use('/workspaces/:workspaceId/members', memberRoutes(deps));
  api.use('/workspaces/:workspaceId/invites', workspaceInviteRoutes(deps));
  api.use('/workspaces/:workspaceId/mail', mailRoutes(deps));
  api.use('/workspaces/:workspaceId/price-sheets', priceSheetRoutes(deps));
  api.use('/workspaces/:workspaceId/recipes', recipeRoutes(deps));
  api.use('/workspaces/:workspaceId/art-sets', artSetRoutes(deps));
  api.use('/workspaces/:workspaceId/runs', runRoutes(deps));
  api.use('/workspaces/:workspaceId/guide', guideRoutes(deps));
  api.use('/workspaces/:workspaceId/tokens', tokenRoutes(deps));
  api.use('/share', publicShareRoutes(deps));
  api.use('/workspaces', workspaceRoutes(deps));
  api.use(notFoundHandler);
  app.use('/api', api);

  const clientDir = deps.config.clientDir;
  if (clientDir && existsSync(join(clientDir, 'index.html'))) {
    app.use(express.static(clientDir, { index: false, maxAge: '1h', setHeaders: noCacheForHtml }));
    // Client-side routes (/w/..., /invite/...) all load the single page.
    app.get('/{*path}', (_req, res) => {
      res.setHeader('Cache-Control', 'no-cache');
      res.sendFile(join(clientDir, 'index.html'));
    });
  }
  app.use(errorHandler);
  return app;
}

function noCacheForHtml(res: express.Response, path: string) {
  if (path.endsWith('.html')) res.setHeader('Cache-Control', 'no-cache');
  else if (path.includes('/assets/')) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
}
