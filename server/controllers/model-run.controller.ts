import type { Request, Response } from 'express';
import * as runs from '../services/model-run.service';
import { idParam } from '../middlewares/params';

export async function list(req: Request, res: Response) {
  res.json(await runs.listRuns(req.user!, idParam(req)));
}
export async function create(req: Request, res: Response) {
  res.status(201).json(await runs.createRun(req.user!, idParam(req), res.locals.body));
}
export async function get(req: Request, res: Response) {
  res.json(await runs.getRun(req.user!, idParam(req)));
}
export async function remove(req: Request, res: Response) {
  await runs.deleteRun(req.user!, idParam(req));
  res.status(204).end();
}
