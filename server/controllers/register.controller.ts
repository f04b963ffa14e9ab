import type { Request, Response } from 'express';
import * as register from '../services/register.service';
import * as prefs from '../services/preferences.service';
import * as batch from '../services/report-batch.service';
import { pipeline } from 'node:stream/promises';
import { idParam } from '../middlewares/params';

export async function list(req: Request, res: Response) {
  res.json(await register.listRegister(req.user!, idParam(req), res.locals.query));
}

function sendFile(res: Response, f: register.ExportFile) {
  res.set('Content-Type', f.contentType);
  res.set('Content-Disposition', `attachment; filename="${f.fileName}"; filename*=UTF-8''${encodeURIComponent(f.fileName)}`);
  res.set('Cache-Control', 'no-store');
  res.send(f.body);
}

export async function exportCsv(req: Request, res: Response) {
  sendFile(res, await register.exportRegisterCsv(req.user!, idParam(req), res.locals.query));
}

export async function exportGeoJson(req: Request, res: Response) {
  sendFile(res, await register.exportRegisterGeoJson(req.user!, idParam(req), res.locals.query));
}

export async function getPreferences(req: Request, res: Response) {
  res.json(await prefs.getPreferences(req.user!));
}

export async function putPreferences(req: Request, res: Response) {
  res.json(await prefs.putPreferences(req.user!, res.locals.body));
}

export async function startBatch(req: Request, res: Response) {
  res.status(202).json(await batch.startBatch(req.user!, idParam(req), res.locals.body));
}

export async function batchStatus(req: Request, res: Response) {
  res.json(await batch.batchStatus(req.user!, String(req.params.batchId)));
}

export async function batchFile(req: Request, res: Response) {
  const f = await batch.batchFile(req.user!, String(req.params.batchId));
  res.set('Content-Type', 'application/zip');
  res.set('Content-Length', String(f.body.size));
  res.set('Content-Disposition', `attachment; filename="${f.fileName}"; filename*=UTF-8''${encodeURIComponent(f.fileName)}`);
  res.set('Cache-Control', 'no-store');
  await pipeline(f.body.stream, res);
}
