import type { Request, Response } from 'express';
import { pipeline } from 'node:stream/promises';
import * as reports from '../services/report.service';
import { idParam } from '../middlewares/params';

/** RFC 6266 Content-Disposition with an ASCII name (our names are slugs). */
const attachment = (name: string) => `attachment; filename="${name.replace(/[^A-Za-z0-9._-]/g, '_')}"`;

export async function report(req: Request, res: Response) {
  res.json(await reports.buildupReport(req.user!, idParam(req), res.locals.query));
}

export async function exportFile(req: Request, res: Response) {
  const q = res.locals.query ?? {};
  const out = await reports.exportBuildup(req.user!, idParam(req), res.locals.params.format, { ...q, bom: q.bom === '1' || q.bom === 'true' });
  if ('preparing' in out) {
    // PNG, SVG and PDF are made by the report job: come back when it is ready
    res.status(202).set('Retry-After', '2').json({ code: 'report_preparing', message: 'The report is being prepared; ask again when it is ready', report: out.preparing });
    return;
  }
  res.status(200).set({ 'Content-Type': out.contentType, 'Content-Disposition': attachment(out.fileName), 'Cache-Control': 'private, no-store' });
  if (typeof out.body === 'string' || Buffer.isBuffer(out.body)) {
    // bytes, so Express keeps the content type as given (RFC 7946 names `application/geo+json` without parameters)
    res.send(typeof out.body === 'string' ? Buffer.from(out.body, 'utf8') : out.body);
    return;
  }
  res.set('Content-Length', String(out.body.size));
  await pipeline(out.body.stream, res);
}

export async function requestPdf(req: Request, res: Response) {
  const s = await reports.requestReport(req.user!, idParam(req), res.locals.body);
  res.status(s.status === 'ready' ? 200 : 202).json(s);
}

export async function status(req: Request, res: Response) {
  res.json(await reports.reportStatus(req.user!, idParam(req)));
}
