/** Builds the Express app: security headers, JSON, routes, the client build, one error handler last. */
import fs from 'node:fs';
import path from 'node:path';
import express from 'express';
import helmet from 'helmet';
import type { Sequelize } from 'sequelize';
import type { Config } from './config';
import { ROOT_DIR } from './config';
import { setContext } from './context';
import { initModels } from './models/index';
import { configurePassport } from './middlewares/auth';
import { apiNotFound, errorHandler } from './middlewares/errors';
import { requestId } from './middlewares/request-id';
import { byFirstSegment } from './routes/first-segment';
import { defaultJsonBody } from './middlewares/body';
import { healthRoutes } from './routes/health.routes';
import { openApiRoutes } from './routes/openapi.routes';
import { authRoutes } from './routes/auth.routes';
import { userRoutes } from './routes/user.routes';
import { projectRoutes } from './routes/project.routes';
import { buildupRoutes } from './routes/buildup.routes';
import { reportRoutes } from './routes/report.routes';
import { registerRoutes } from './routes/register.routes';
import { noteRoutes } from './routes/note.routes';
import { reviewRoutes } from './routes/review.routes';
import { modelRunRoutes } from './routes/model-run.routes';
import { sectionRoutes } from './routes/section.routes';
import { segyRoutes } from './routes/segy.routes';
import { calibrationRoutes } from './routes/calibration.routes';
import { velocityRoutes } from './routes/velocity.routes';
import { depthViewRoutes } from './routes/depth-view.routes';
import { analogueRoutes } from './routes/analogue.routes';
import { accountRoutes, notificationRoutes, outboxRoutes } from './routes/notification.routes';
import type { Mailer } from './mail/mailer';
import { forgetOnWrites, type SessionCache } from './services/session-cache';
import { AuthSession, User } from './models/index';

export interface AppDeps {
  config: Config;
  sequelize: Sequelize;
  mailer: Mailer;
  sessions?: SessionCache;
}

export function createApp(deps: AppDeps) {
  setContext(deps);
  initModels(deps.sequelize);
  if (deps.sessions) forgetOnWrites(deps.sessions, [User, AuthSession]);
  const app = express();
  app.set('trust proxy', deps.config.trustProxy);
  app.disable('x-powered-by');
  app.use(requestId);
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'img-src': ["'self'", 'data:', 'blob:'],
          'worker-src': ["'self'", 'blob:'],
        },
      },
    }),
  );
  // small JSON bodies by default; routes taking large ones parse them after requireAuth (middlewares/body.ts)
  app.use('/api', defaultJsonBody(app, deps.config));
  configurePassport(deps.config.jwtSecret);

  app.use('/api/health', healthRoutes());
  app.use('/api/auth', authRoutes(deps.config));
  app.use('/api/users', userRoutes());
  app.use('/api', byFirstSegment(sectionRoutes(deps.config)));
  app.use('/api', byFirstSegment(segyRoutes(deps.config)));
  app.use('/api', byFirstSegment(calibrationRoutes()));
  app.use('/api', byFirstSegment(velocityRoutes()));
  app.use('/api', byFirstSegment(depthViewRoutes()));
  app.use('/api/projects', projectRoutes());
  app.use('/api', byFirstSegment(buildupRoutes()));
  app.use('/api', byFirstSegment(analogueRoutes()));
  app.use('/api', byFirstSegment(reportRoutes()));
  app.use('/api', byFirstSegment(registerRoutes()));
  app.use('/api', byFirstSegment(noteRoutes()));
  app.use('/api', byFirstSegment(reviewRoutes()));
  app.use('/api', byFirstSegment(modelRunRoutes()));
  app.use('/api/notifications', notificationRoutes());
  app.use('/api/account', accountRoutes());
  app.use('/api/admin/mail', outboxRoutes());
  app.use('/api', byFirstSegment(openApiRoutes()));
  app.use('/api', apiNotFound);

  // CAYLINE_CLIENT_DIR: serve a client build from elsewhere (parallel end-to-end runs build into their own folder)
  const clientDir = process.env.CAYLINE_CLIENT_DIR ? path.resolve(process.env.CAYLINE_CLIENT_DIR) : path.join(ROOT_DIR, 'dist', 'client');
  if (fs.existsSync(path.join(clientDir, 'index.html'))) {
    app.use(express.static(clientDir, { index: false, maxAge: '1h' }));
    app.get(/^\/(?!api\/).*/, (_req, res) => res.sendFile(path.join(clientDir, 'index.html')));
  }
  app.use(errorHandler);
  return app;
}
