import type { Request, Response } from 'express';
import * as register from '../services/register.service';
import * as prefs from '../services/preferences.service';
import { idParam } from './user.controller';

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
