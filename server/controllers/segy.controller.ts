/** HTTP side of SEG-Y uploads and of a SEG-Y section's headers, amplitudes and rendering. */
import type { NextFunction, Request, Response } from 'express';
import * as segy from '../services/segy.service';
import { assertCanEdit } from '../services/project.service';
import { idParam } from '../middlewares/params';

/** Before a file is read: only editors of the project may send one. */
export async function requireProjectEditor(req: Request, _res: Response, next: NextFunction) {
  await assertCanEdit(req.user!, idParam(req, 'projectId'));
  next();
}
export async function upload(req: Request, res: Response) {
  const r = await segy.createFromUpload(req.user!, idParam(req, 'projectId'), res.locals.segy);
  if (r.section) res.location(`/api/sections/${r.section.id}`);
  res.status(202).json(r);
}
export async function list(req: Request, res: Response) {
  res.json(await segy.listUploads(req.user!, idParam(req, 'projectId')));
}
export async function get(req: Request, res: Response) {
  res.json(await segy.getUpload(req.user!, idParam(req)));
}
export async function remove(req: Request, res: Response) {
  await segy.deleteUpload(req.user!, idParam(req));
  res.status(204).end();
}
export async function extract(req: Request, res: Response) {
  const r = await segy.extractSection(req.user!, idParam(req), res.locals.body);
  res.status(202).location(`/api/sections/${r.id}`).json(r);
}
export async function headers(req: Request, res: Response) {
  res.json(await segy.headerView(req.user!, idParam(req)));
}
export async function traceHeaders(req: Request, res: Response) {
  res.json(await segy.traceHeaderPage(req.user!, idParam(req), res.locals.query));
}
export async function amplitudes(req: Request, res: Response) {
  res.json(await segy.amplitudeWindow(req.user!, idParam(req), res.locals.query));
}
export async function render(req: Request, res: Response) {
  res.status(202).json(await segy.rerender(req.user!, idParam(req), res.locals.body));
}
