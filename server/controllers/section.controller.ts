/** HTTP side of sections: reads validated input from res.locals, calls the service, shapes the reply. */
import { pipeline } from 'node:stream/promises';
import type { NextFunction, Request, Response } from 'express';
import * as sections from '../services/section.service';
import { assertCanEdit } from '../services/project.service';
import type { StoredObject } from '../storage/fileStore';
import { idParam } from '../middlewares/params';

/** Files of a ready pyramid never change under their URL. */
export const IMMUTABLE = 'private, max-age=31536000, immutable';

async function sendStored(res: Response, obj: StoredObject) {
  res.status(200).set({ 'Content-Type': 'image/jpeg', 'Content-Length': String(obj.size), 'Cache-Control': IMMUTABLE });
  try {
    await pipeline(obj.stream, res);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'ERR_STREAM_PREMATURE_CLOSE') throw e;
  }
}

/** Before a file is accepted: only editors of the project may send one (so refused users upload nothing). */
export async function requireProjectEditor(req: Request, res: Response, next: NextFunction) {
  await assertCanEdit(req.user!, idParam(req, 'projectId'));
  next();
}

export async function upload(req: Request, res: Response) {
  const r = await sections.createSection(req.user!, idParam(req, 'projectId'), res.locals.body, req.file!);
  res.status(202).location(`/api/sections/${r.id}`).json(r);
}
export async function list(req: Request, res: Response) {
  res.json(await sections.listSections(req.user!, idParam(req, 'projectId'), res.locals.query));
}
export async function get(req: Request, res: Response) {
  res.json(await sections.sectionDetail(req.user!, idParam(req)));
}
export async function update(req: Request, res: Response) {
  res.json(await sections.updateSection(req.user!, idParam(req), res.locals.body));
}
export async function remove(req: Request, res: Response) {
  await sections.deleteSection(req.user!, idParam(req));
  res.status(204).end();
}
export async function retry(req: Request, res: Response) {
  const r = await sections.retrySection(req.user!, idParam(req));
  res.status(202).location(`/api/sections/${r.id}`).json(r);
}
export async function tile(req: Request, res: Response) {
  const { id, z, x, y } = res.locals.params;
  await sendStored(res, await sections.openTile(req.user!, id, z, x, y));
}
export async function thumbnail(req: Request, res: Response) {
  await sendStored(res, await sections.openImage(req.user!, idParam(req), 'thumbnail'));
}
export async function preview(req: Request, res: Response) {
  await sendStored(res, await sections.openImage(req.user!, idParam(req), 'preview'));
}
