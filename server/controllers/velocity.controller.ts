/** HTTP side of a section's velocity model: `:id` is the section. */
import type { Request, Response } from 'express';
import * as velocity from '../services/velocity.service';
import { idParam } from '../middlewares/params';

export async function get(req: Request, res: Response) {
  res.json(await velocity.getVelocity(req.user!, idParam(req)));
}
export async function put(req: Request, res: Response) {
  res.json(await velocity.putVelocity(req.user!, idParam(req), res.locals.body.velocity, res.locals.body.baseUpdatedAt));
}
