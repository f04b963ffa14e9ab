import type { Request, Response } from 'express';
import * as review from '../services/review.service';
import { idParam, wholeParam } from '../middlewares/params';

/** `:version` of a kept version: a whole number ≥ 0 (version 0 is the empty buildup as created). */
const versionParam = (req: Request) => wholeParam(req, 'version');

export async function get(req: Request, res: Response) {
  res.json(await review.getReview(req.user!, idParam(req)));
}
export async function transition(req: Request, res: Response) {
  res.json(await review.transition(req.user!, idParam(req), res.locals.body));
}
export async function versions(req: Request, res: Response) {
  res.json(await review.listVersions(req.user!, idParam(req)));
}
export async function version(req: Request, res: Response) {
  res.json(await review.getVersion(req.user!, idParam(req), versionParam(req)));
}
export async function versionMeasurements(req: Request, res: Response) {
  res.json(await review.measureVersion(req.user!, idParam(req), versionParam(req), res.locals.query));
}
