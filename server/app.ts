import fs from 'node:fs';
import path from 'node:path';
import compression from 'compression';
import express from 'express';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import pg from 'pg';
import type { Logger } from 'pino';
import type { Sequelize } from 'sequelize';
import type { Config } from './config';
import { authRouter, meRouter } from './features/auth/auth.routes';
import { createPassport } from './features/auth/auth.passport';
import { buildsRouter } from './features/builds/builds.routes';
import { createCalcRouter } from './features/calc/calc.routes';
import { buildClipsRouter, clipsRouter, momentsRouter } from './features/clips/clips.routes';
import { clipUploadsRouter } from './features/clips/clip-uploads.routes';
import { createResumableUploads } from './features/clips/clip-uploads.service';
import { buildReadingsRouter, readingsRouter } from './features/readings/readings.routes';
import { buildClearancesRouter, clearancesRouter } from './features/clearances/clearances.routes';
import { healthRouter } from './features/health/health.routes';
import { instrumentsRouter } from './features/instruments/instruments.routes';
import { specsRouter } from './features/specs/specs.routes';
import { unsubscribeRouter } from './features/follows/unsubscribe.routes';
import { followsRouter, meFollowsRouter } from './features/follows/follows.routes';
import { publicRouter } from './features/public/public.routes';
import { readsOwnJsonBody } from './features/readings/readings.routes';
import { crawlerRouter, feedsRouter } from './features/feeds/feeds.routes';
import { sheetsApiRouter, sheetsPdfRouter } from './features/sheets/sheets.routes';
import { questionsRouter, storyQuestionsRouter } from './features/questions/questions.routes';
import { outboxRouter } from './features/outbox/outbox.routes';
import { storyShareTags } from './features/public/share-meta';
import { reviewRouter, storyTransitionsRouter } from './features/review/review.routes';
import { buildStoriesRouter, storiesRouter } from './features/stories/stories.routes';
import { storyImageFilesRouter, storyImagesRouter } from './features/stories/story-images';
import { adminUsersRouter } from './features/users/users.routes';
import { clipSpeechRouter, publicSpeechRouter } from './features/speech/speech.routes';
import { csrfProtection } from './http/csrf';
import { apiNotFound, errorHandler } from './http/error-handler';
import { mount } from './http/routes';
import { sessionLimits, sessionMiddleware } from './http/session';
import type { Queue } from './jobs/queue';
import type { Storage } from './storage/storage';

export interface AppDeps {
  config: Config;
  sequelize: Sequelize;
  logger: Logger;
  storage: Storage;
  /** The job queue; null when this process only serves (uploads are then not processed). */
  queue: Queue | null;
}

/** Builds the Express app (no listen). `close()` releases what the app itself opened. */
export function createApp({ config, sequelize, logger, storage, queue }: AppDeps) {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', config.trustProxy ? 1 : false);

  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: true,
        directives: {
          'default-src': ["'self'"],
          'script-src': ["'self'"],
          // Radix positions popovers with inline style attributes.
          'style-src': ["'self'", "'unsafe-inline'"],
          'img-src': ["'self'", 'data:', 'blob:', 'https://avatars.githubusercontent.com'],
          'media-src': ["'self'", 'blob:'],
          'font-src': ["'self'"],
          'connect-src': ["'self'"],
          'frame-ancestors': ["'none'"],
          'form-action': ["'self'"],
          'object-src': ["'none'"],
          'upgrade-insecure-requests': config.publicUrl.startsWith('https:') ? [] : null,
        },
      },
      strictTransportSecurity: config.publicUrl.startsWith('https:'),
    }),
  );
  app.use(
    pinoHttp({
      logger,
      autoLogging: { ignore: (req) => req.url?.startsWith('/assets/') ?? false },
      redact: ['req.headers.cookie', 'req.headers["x-csrf-token"]', 'res.headers["set-cookie"]'],
    }),
  );
  const jsonBody = express.json({
    limit: '256kb',
    // The calculator checks the numbers as sent, so it keeps the text (see calc.routes.ts, figureDigits).
    verify: (req, _res, buf) => {
      if ((req as { originalUrl?: string }).originalUrl?.startsWith('/api/calc')) (req as { rawBody?: Buffer }).rawBody = buf;
    },
  });
  // The readings import parses its own larger body after its access check (readings.routes.ts).
  app.use((req, res, next) => (readsOwnJsonBody(req.originalUrl) ? next() : jsonBody(req, res, next)));

  const sessionPool = new pg.Pool({ connectionString: config.databaseUrl, max: 5 });
  // An idle client dropped by a restarting database emits 'error'; unheard, that would end the process.
  sessionPool.on('error', (err) => logger.warn({ err }, 'session store connection lost; it reconnects on the next request'));
  app.use(sessionMiddleware(config, sessionPool));
  app.use(sessionLimits(config.sessionMaxMs));
  const passport = createPassport(config);
  app.use(passport.initialize());
  app.use(passport.session());

  const csrf = csrfProtection();
  app.use(csrf.protect);

  mount(app, '/auth', authRouter(passport, { signInLimit: config.signInRateLimit }));
  mount(app, '/api/health', healthRouter(sequelize, config.speech));
  mount(app, '/api/csrf-token', csrf.tokenRouter);
  mount(app, '/api/me', meRouter);
  mount(app, '/api/admin/users', adminUsersRouter);
  // A new router (and so a new rate-limit counter) per app, so apps never share limits.
  mount(app, '/api/calc', createCalcRouter());
  mount(app, '/api/builds', buildsRouter);
  mount(app, '/api/builds/:buildId/clips', buildClipsRouter({ config, storage, queue }));
  // Resumable uploads (tus); their sweep of expired uploads stops with close().
  const uploads = createResumableUploads({ config, storage, queue, logger });
  mount(app, '/api/builds/:buildId/uploads', clipUploadsRouter(uploads, config));
  mount(app, '/api/clips', clipsRouter({ config, storage, queue }));
  mount(app, '/api/moments', momentsRouter());
  mount(app, '/api/builds/:buildId/stories', buildStoriesRouter());
  mount(app, '/api/stories', storiesRouter({ storage }));
  mount(app, '/api/stories', storyImagesRouter({ config, storage }));
  mount(app, '/api/story-images', storyImageFilesRouter({ storage }));
  mount(app, '/api/builds/:buildId', buildReadingsRouter());
  mount(app, '/api/readings', readingsRouter());
  mount(app, '/api/builds/:buildId/clearances', buildClearancesRouter());
  mount(app, '/api/clearances', clearancesRouter());
  mount(app, '/api/instruments', instrumentsRouter());
  mount(app, '/api/specs', specsRouter());
  const review = { config, queue, logger };
  mount(app, '/api/stories', storyTransitionsRouter(review));
  mount(app, '/api/review', reviewRouter(review));
  mount(app, '/api/admin/outbox', outboxRouter(config));
  mount(app, '/api/unsubscribe', unsubscribeRouter(config));
  mount(app, '/api/public', publicRouter({ storage, stillsPerClip: config.stillsPerClip }));
  mount(app, '/api/builders', followsRouter());
  mount(app, '/api/me', meFollowsRouter());
  mount(app, '/feeds', feedsRouter(config));
  mount(app, '/', crawlerRouter(config));
  mount(app, '/api/public', sheetsApiRouter(config));
  mount(app, '/sheets', sheetsPdfRouter(config));
  mount(app, '/api/public/stories', storyQuestionsRouter());
  mount(app, '/api/questions', questionsRouter());
  mount(app, '/api/clips', clipSpeechRouter({ config, queue, logger }));
  mount(app, '/api/public/clips', publicSpeechRouter());

  app.use(['/api', '/auth'], apiNotFound);
  serveClient(app, config);
  app.use(errorHandler);

  return {
    app,
    async close() {
      await uploads.close();
      await sessionPool.end();
    },
  };
}

/** The built client: hashed assets cached for a year, every other GET answered with index.html. */
function serveClient(app: express.Express, config: Config) {
  const dir = path.resolve(config.clientDir);
  const index = path.join(dir, 'index.html');
  // Gzip for the page and its code (the reader's first load is ~140 KB gzip, ~420 KB raw). The API
  // is left as it is: its cached story bodies are sent as stored, and media do not compress.
  app.use(compression());
  app.use('/assets', express.static(path.join(dir, 'assets'), { immutable: true, maxAge: '1y', fallthrough: false }));
  app.use(express.static(dir, { index: false, maxAge: '1h' }));
  // A public story's page carries its share tags in the HTML itself: link-preview crawlers run no scripts.
  app.get(['/stories/:storyId', '/stories/:storyId/claims/:claimKey'], async (req, res, next) => {
    const storyId = Number(req.params.storyId);
    if (!Number.isInteger(storyId) || storyId <= 0 || !fs.existsSync(index)) return next();
    const tags = await storyShareTags(storyId, config.publicUrl);
    if (!tags) return next();
    // A function replacement: a title holding $` or $' must not paste parts of the page into itself.
    const html = (await fs.promises.readFile(index, 'utf8')).replace('</head>', () => `${tags}</head>`);
    res.set('Cache-Control', 'no-cache');
    res.type('html').send(html);
  });
  app.get('/{*splat}', (_req, res, next) => {
    if (!fs.existsSync(index)) return next();
    res.set('Cache-Control', 'no-cache');
    res.sendFile(index);
  });
}
