import type { Request, Response } from 'express';
import * as buildups from '../services/buildup.service';
import { idParam } from '../middlewares/params';
import { measureWorkProblem } from '../../shared/schemas/measure-limits';
import { AppError } from '../errors';
import { measureOffLoop } from '../measure/pool';

export async function list(req: Request, res: Response) {
  res.json(await buildups.listBuildups(req.user!, idParam(req, 'sectionId')));
}
export async function create(req: Request, res: Response) {
  res.status(201).json(await buildups.createBuildup(req.user!, idParam(req, 'sectionId'), res.locals.body.name));
}
export async function get(req: Request, res: Response) {
  res.json(await buildups.getBuildup(req.user!, idParam(req)));
}
export async function save(req: Request, res: Response) {
  res.json(await buildups.saveBuildup(req.user!, idParam(req), res.locals.body));
}
export async function remove(req: Request, res: Response) {
  await buildups.deleteBuildup(req.user!, idParam(req));
  res.status(204).end();
}
export async function measurements(req: Request, res: Response) {
  res.json(await buildups.measureBuildup(req.user!, idParam(req), res.locals.query));
}
/**
 * `POST /api/measure`: the engine on a posted interpretation (spec §9), on the
 * measurement pool. Work beyond the budget answers 422 `work_too_large`
 * naming `options.draws` and the largest draws this input may ask for.
 */
export async function measureInterpretation(req: Request, res: Response) {
  const body = (req.body ?? {}) as { interpretation?: unknown; options?: unknown };
  const draws = body.options && typeof body.options === 'object' ? (body.options as { draws?: unknown }).draws : undefined;
  const tooMuch = measureWorkProblem(body.interpretation, draws, 'options.draws');
  if (tooMuch) throw new AppError(422, 'work_too_large', `${tooMuch.path}: ${tooMuch.message}`, [{ path: tooMuch.path, message: tooMuch.message }]);
  res.json(await measureOffLoop(body.interpretation, body.options));
}
