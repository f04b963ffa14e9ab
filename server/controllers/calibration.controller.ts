/** HTTP side of a section's calibrations: `:id` is the section. */
import type { Request, Response } from 'express';
import * as calibrations from '../services/calibration.service';
import { idParam } from '../middlewares/params';

export async function list(req: Request, res: Response) {
  res.json(await calibrations.listCalibrations(req.user!, idParam(req)));
}
export async function save(req: Request, res: Response) {
  res.status(201).json(await calibrations.saveCalibration(req.user!, idParam(req), res.locals.body));
}
export async function preview(req: Request, res: Response) {
  res.json(await calibrations.previewCalibration(req.user!, idParam(req), res.locals.body));
}
