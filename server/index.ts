/**
 * Boots one Cayline server process: database connection and migrations, the
 * local mail sink, the Express app, and listening. Used by `npm start`, the
 * dev script and the tests.
 */
import type { Server } from 'node:http';
import path from 'node:path';
import { loadConfig, type Config } from './config';
import { createSequelize } from './db/sequelize';
import { migrate } from './db/migrate';
import { createApp } from './app';
import { createMailer } from './mail/mailer';
import { startMailSink, type MailSink } from './mail/sink';
import { importSinkBacklog, onSinkMessage } from './mail/outbox';
import { mailSettled } from './services/notify.service';
import { logger } from './logger';
import { startBackgroundJobs } from './jobs/pyramid.job';
import { closeMeasurePool } from './measure/pool';
import { watchSessions } from './services/session-cache';
import { fileStoreFor } from './storage/fileStore';
import { closeReportPdfThread } from './reports/pdf-thread';

export interface Running {
  app: ReturnType<typeof createApp>;
  config: Config;
  server: Server | null;
  url: string;
  close(): Promise<void>;
}

export interface BootOptions {
  databaseUrl: string;
  config?: Partial<Config>;
  listen?: boolean;
  /** Called after migrations, before listening (demo seeding). */
  afterMigrate?: (deps: { sequelize: ReturnType<typeof createSequelize>; config: Config }) => Promise<void>;
}

export async function boot(opts: BootOptions): Promise<Running> {
  const config = loadConfig(opts.config);
  const sequelize = createSequelize(opts.databaseUrl);
  await sequelize.authenticate();
  await migrate(sequelize);

  let sink: MailSink | null = null;
  let smtpHost = process.env.SMTP_HOST;
  let smtpPort = config.mail.port;
  if (!smtpHost) {
    sink = await startMailSink(path.join(config.storageDir, 'mail'), smtpPort, onSinkMessage, fileStoreFor(config.storageDir));
    smtpHost = '127.0.0.1';
    smtpPort = sink.port;
  }
  const mailer = createMailer({ host: smtpHost, port: smtpPort, from: config.mail.from });
  const sessionWatch = watchSessions(opts.databaseUrl);
  const app = createApp({ config, sequelize, mailer, sessions: sessionWatch.cache });
  let jobs: Awaited<ReturnType<typeof startBackgroundJobs>> | null = null;
  let server: Server | null = null;
  let url = '';
  try {
    if (sink) await importSinkBacklog(fileStoreFor(config.storageDir));
    jobs = await startBackgroundJobs({ databaseUrl: opts.databaseUrl, config, sequelize });
    if (opts.afterMigrate) await opts.afterMigrate({ sequelize, config });
    if (opts.listen !== false) {
      server = await new Promise<Server>((resolve, reject) => {
        const s = app.listen(config.port, () => resolve(s));
        s.once('error', reject);
      });
      const addr = server.address();
      url = `http://localhost:${typeof addr === 'object' && addr ? addr.port : config.port}`;
      // links in mails point at this server unless PUBLIC_URL (or the caller) says where people reach it
      if (!process.env.PUBLIC_URL && !opts.config?.publicUrl) config.publicUrl = url;
    }
  } catch (e) {
    // a failed start leaves no queue worker, LISTEN connection, mail sink or pool keeping the process alive
    await jobs?.stop().catch(() => {});
    await sessionWatch.close();
    await sink?.close().catch(() => {});
    await sequelize.close().catch(() => {});
    throw e;
  }
  const startedJobs = jobs;
  logger.info({ url, smtp: `${smtpHost}:${smtpPort}` }, 'Cayline server up');

  return {
    app,
    config,
    server,
    url,
    async close() {
      if (server) await new Promise<void>((r) => server!.close(() => r()));
      await startedJobs.stop();
      await sessionWatch.close();
      await mailSettled();
      await closeMeasurePool();
      await closeReportPdfThread();
      await sink?.close();
      await sequelize.close();
    },
  };
}
