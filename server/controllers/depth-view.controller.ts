/** HTTP side of the depth view: `:id` is the section, `:build` a depth build number. */
import { pipeline } from 'node:stream/promises';
import type { Request, Response } from 'express';
import * as depth from '../services/depth-view.service';
import { idParam } from '../middlewares/params';
import type { StoredObject } from '../storage/fileStore';
import { IMMUTABLE } from './section.controller';

/** The same answer and cache headers as the TWT tiles (a build number never changes its files). */
async function sendStored(res: Response, obj: StoredObject) {
  res.status(200).set({ 'Content-Type': 'image/jpeg', 'Content-Length': String(obj.size), 'Cache-Control': IMMUTABLE });
  try {
    await pipeline(obj.stream, res);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'ERR_STREAM_PREMATURE_CLOSE') throw e;
  }
}

export async function get(req: Request, res: Response) {
  res.json(await depth.getDepthView(req.user!, idParam(req)));
}
export async function request(req: Request, res: Response) {
  const r = await depth.requestDepthView(req.user!, idParam(req));
  res.status(r.queued ? 202 : 200).json(r.state);
}
export async function tile(req: Request, res: Response) {
  const { build, z, x, y } = res.locals.params;
  await sendStored(res, await depth.openDepthTile(req.user!, idParam(req), build, z, x, y));
}
export async function preview(req: Request, res: Response) {
  await sendStored(res, await depth.openDepthPreview(req.user!, idParam(req), res.locals.params.build));
}
