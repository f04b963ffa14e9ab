/**
 * The `register-report-batch` job: one job for "the reports of all
 * signed-off buildups of a project". It waits for each buildup's report PDF
 * (made and cached by the `buildup-report` job, report.job.ts; a current
 * cached PDF is reused as it is) and packs them into ONE ZIP ARCHIVE — one
 * PDF per buildup plus `index.csv` — stored under `report-batches/<job id>.zip`.
 *
 * Progress is read, not written: the mean progress of the batch's report
 * rows while they are made, then the packing step (report-batch.service.ts).
 * A report that fails, or is replaced because its buildup changed meanwhile,
 * fails the batch with the reason; asking again starts a fresh batch.
 */
import type PgBoss from 'pg-boss';
import { createQueue } from './queue';
import Papa from 'papaparse';
import { zipSync, type Zippable } from 'fflate';
import type { Config } from '../config';
import { logger } from '../logger';
import { BuildupReportRow } from '../models/report';
import { fileStoreFor } from '../storage/fileStore';

export const BATCH_QUEUE = 'register-report-batch';

export interface BatchEntry {
  reportId: number;
  buildupId: number;
  name: string;
  section: string;
  line: string;
  signedOffBy: string | null;
  signedOffAt: string | null;
  fileName: string;
}

export interface BatchJobData {
  projectId: number;
  projectName: string;
  requestedById: number;
  unit: string;
  paper: string;
  entries: BatchEntry[];
}

export const batchFileKey = (jobId: string) => `report-batches/${jobId}.zip`;

const POLL_MS = 500;

async function streamToBuffer(stream: NodeJS.ReadableStream): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(typeof c === 'string' ? Buffer.from(c) : Buffer.from(c));
  return Buffer.concat(chunks);
}

/** Wait for every report of the batch, then write the archive. Throws (the job fails) with a reason a person can act on. */
export async function runBatch(job: PgBoss.Job<BatchJobData>, config: Config, stopping: () => boolean): Promise<{ bytes: number; files: number }> {
  const { entries } = job.data;
  const ids = entries.map((e) => e.reportId);
  for (;;) {
    if (stopping()) throw new Error('the server stopped while the batch waited; ask for it again');
    const rows = await BuildupReportRow.findAll({ where: { id: ids } });
    const byId = new Map(rows.map((r) => [r.id, r]));
    const missing = entries.find((e) => !byId.has(e.reportId));
    if (missing) throw new Error(`${missing.name} changed while the batch ran; ask for the batch again`);
    const failed = rows.find((r) => r.status === 'failed');
    if (failed) {
      const e = entries.find((x) => x.reportId === failed.id)!;
      throw new Error(`the report of ${e.name} failed: ${failed.failureReason ?? 'no reason given'}`);
    }
    if (rows.every((r) => r.status === 'ready')) break;
    await new Promise((res) => setTimeout(res, POLL_MS));
  }
  const store = fileStoreFor(config.storageDir);
  const files: Zippable = {};
  for (const e of entries) {
    const row = (await BuildupReportRow.findByPk(e.reportId))!;
    const obj = await store.get(`reports/${row.cacheKey}/report.pdf`);
    if (!obj) throw new Error(`the PDF of ${e.name} is missing from the store; ask for the batch again`);
    // PDFs are compressed already: stored, not deflated again
    files[e.fileName] = [new Uint8Array(await streamToBuffer(obj.stream)), { level: 0 }];
  }
  const index = Papa.unparse(
    {
      fields: ['File', 'Buildup id', 'Buildup', 'Section', 'Line', 'Signed off by', 'Signed off at (UTC)'],
      data: entries.map((e) => [e.fileName, e.buildupId, e.name, e.section, e.line, e.signedOffBy ?? '', e.signedOffAt ?? '']),
    },
    { newline: '\r\n', escapeFormulae: true },
  );
  files['index.csv'] = new TextEncoder().encode(`\uFEFF${index}\r\n`);
  const zip = Buffer.from(zipSync(files));
  await store.put(batchFileKey(job.id), zip);
  return { bytes: zip.length, files: entries.length };
}

/** Create the queue and work it where this process runs workers. */
export async function startBatchJobs(boss: PgBoss, config: Config, stopping: () => boolean): Promise<void> {
  await createQueue(boss, BATCH_QUEUE, { name: BATCH_QUEUE, retryLimit: 0, expireInSeconds: config.jobs.expireInSeconds });
  if (!config.jobs.runWorkers) return;
  await boss.work<BatchJobData>(BATCH_QUEUE, { pollingIntervalSeconds: config.jobs.pollingIntervalSeconds, batchSize: 1 }, async (jobs) => {
    for (const job of jobs) {
      try {
        return await runBatch(job, config, stopping);
      } catch (err) {
        logger.warn({ err, jobId: job.id }, 'report batch failed');
        throw err;
      }
    }
  });
}
