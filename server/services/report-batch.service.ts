/**
 * "PDF of all signed-off buildups" of a project: one `register-report-batch`
 * job (server/jobs/report-batch.job.ts) that gathers each buildup's report
 * PDF into one ZIP archive (one PDF per buildup and an index.csv). The
 * reports themselves are the buildup-report jobs' cached PDFs (the other
 * report routes share them).
 *
 * Members may ask (reviewers and curators read and export too); the batch is
 * known by its job id, and only members of its project see it.
 */
import type PgBoss from 'pg-boss';
import { QueryTypes } from 'sequelize';
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { BuildupReportRow } from '../models/report';
import { fileStoreFor, type StoredObject } from '../storage/fileStore';
import { jobQueue, transactionDb } from '../jobs/queue';
import { BATCH_QUEUE, batchFileKey, type BatchEntry, type BatchJobData } from '../jobs/report-batch.job';
import { projectForViewer, type Actor } from './project.service';
import { requestReport } from './report.service';
import { audit } from './audit.service';
import { exportFileName, type Paper } from '../../shared/report/report';
import type { BatchReportJob } from '../../shared/schemas/register';
import type { LengthUnit } from '../../shared/units';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

interface SignedOff {
  id: number;
  name: string;
  section: string;
  line_name: string;
  signed_off_at: Date | null;
  signed_off_by: string | null;
}

/** Start the batch: every signed-off buildup's report is asked for (cached ones reused), then one job packs them. */
export async function startBatch(actor: Actor, projectId: number, opts: { paper?: Paper; unit?: LengthUnit; stretch?: number }): Promise<BatchReportJob> {
  const project = await projectForViewer(actor, projectId);
  const rows = await ctx().sequelize.query<SignedOff>(
    `SELECT b.id, b.name, s.title AS section, s.line_name, b.signed_off_at, u.name AS signed_off_by
       FROM buildups b JOIN sections s ON s.id = b.section_id LEFT JOIN users u ON u.id = b.signed_off_by_id
      WHERE s.project_id = $projectId AND b.review_state = 'signed_off'
      ORDER BY lower(s.title), lower(b.name), b.id`,
    { bind: { projectId }, type: QueryTypes.SELECT },
  );
  if (!rows.length) throw new AppError(409, 'nothing_signed_off', 'No buildup of this project is signed off yet; the batch holds signed-off buildups only');
  const entries: BatchEntry[] = [];
  const used = new Set<string>();
  for (const [i, r] of rows.entries()) {
    const status = await requestReport(actor, r.id, opts);
    let fileName = `${String(i + 1).padStart(2, '0')}-${exportFileName(r.line_name || r.section, r.name, 'pdf', opts.paper ?? 'a4')}`;
    while (used.has(fileName)) fileName = fileName.replace(/\.pdf$/, `-${r.id}.pdf`);
    used.add(fileName);
    entries.push({
      reportId: status.id,
      buildupId: r.id,
      name: r.name,
      section: r.section,
      line: r.line_name,
      signedOffBy: r.signed_off_by,
      signedOffAt: r.signed_off_at ? new Date(r.signed_off_at).toISOString() : null,
      fileName,
    });
  }
  const first = entries.length ? await BuildupReportRow.findByPk(entries[0].reportId) : null;
  const data: BatchJobData = {
    projectId,
    projectName: project.name,
    requestedById: actor.id,
    unit: first?.unit ?? opts.unit ?? 'm',
    paper: first?.paper ?? opts.paper ?? 'a4',
    entries,
  };
  // the job and its audit line in one transaction
  const id = await ctx().sequelize.transaction(async (transaction) => {
    const db = transactionDb(transaction, 'startBatch');
    const jobId = await jobQueue().send(BATCH_QUEUE, data, { db });
    if (!jobId) throw new AppError(503, 'queue_refused', 'The job queue did not take the batch; try again in a moment');
    await audit(actor.id, 'report.batch', 'project', projectId, { jobId, buildups: entries.map((e) => e.buildupId) }, transaction);
    return jobId;
  });
  return batchStatus(actor, id);
}

async function jobFor(actor: Actor, id: string): Promise<PgBoss.JobWithMetadata<BatchJobData>> {
  const job = UUID.test(id) ? await jobQueue().getJobById<BatchJobData>(BATCH_QUEUE, id, { includeArchive: true } as never) : null;
  if (!job) throw notFound('Report batch');
  await projectForViewer(actor, job.data.projectId).catch(() => {
    throw notFound('Report batch');
  });
  return job;
}

/** State and progress of a batch: the reports' progress while they are made, then the packing. */
export async function batchStatus(actor: Actor, id: string): Promise<BatchReportJob> {
  const job = await jobFor(actor, id);
  const entries = job.data.entries;
  const reports = await BuildupReportRow.findAll({ where: { id: entries.map((e) => e.reportId) } });
  const ready = reports.filter((r) => r.status === 'ready').length;
  const meanReport = entries.length ? reports.reduce((s, r) => s + (r.status === 'ready' ? 100 : r.progress), 0) / (100 * entries.length) : 1;
  const state: BatchReportJob['state'] =
    job.state === 'completed' ? 'done' : job.state === 'failed' || job.state === 'cancelled' ? 'failed' : job.state === 'active' ? 'running' : 'queued';
  const output = job.output as { message?: string } | null;
  return {
    id: job.id,
    state,
    progress: state === 'done' ? 1 : Math.min(0.95, 0.95 * meanReport),
    total: entries.length,
    done: ready,
    message: state === 'failed' ? (output?.message ?? 'the batch failed') : null,
  };
}

/** The archive of a finished batch. */
export async function batchFile(actor: Actor, id: string): Promise<{ fileName: string; body: StoredObject }> {
  const job = await jobFor(actor, id);
  if (job.state !== 'completed') throw new AppError(409, 'batch_not_ready', `The batch is not finished yet (${job.state}); ask for its status and try again when it is done`);
  const obj = await fileStoreFor(ctx().config.storageDir).get(batchFileKey(job.id));
  if (!obj) throw new AppError(410, 'batch_gone', 'The archive of this batch is no longer kept; ask for a new batch');
  const slug = job.data.projectName.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'project';
  return { fileName: `${slug}-signed-off-reports-${job.data.paper}-${job.data.unit}.zip`, body: obj };
}
