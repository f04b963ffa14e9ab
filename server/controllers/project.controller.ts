import type { Request, Response } from 'express';
import * as projects from '../services/project.service';
import { idParam } from '../middlewares/params';

export async function list(req: Request, res: Response) {
  res.json(await projects.listProjects(req.user!, res.locals.query));
}
export async function create(req: Request, res: Response) {
  res.status(201).json(await projects.createProject(req.user!, res.locals.body));
}
export async function get(req: Request, res: Response) {
  res.json(await projects.projectDetail(req.user!, idParam(req)));
}
export async function update(req: Request, res: Response) {
  res.json(await projects.updateProject(req.user!, idParam(req), res.locals.body));
}
export async function remove(req: Request, res: Response) {
  await projects.deleteProject(req.user!, idParam(req));
  res.status(204).end();
}
export async function members(req: Request, res: Response) {
  const id = idParam(req);
  await projects.projectForViewer(req.user!, id);
  res.json(await projects.members(id));
}
export async function addMember(req: Request, res: Response) {
  res.status(201).json(await projects.addMember(req.user!, idParam(req), res.locals.body.userId));
}
export async function removeMember(req: Request, res: Response) {
  await projects.removeMember(req.user!, idParam(req), idParam(req, 'userId'));
  res.status(204).end();
}
export async function transferOwner(req: Request, res: Response) {
  res.json(await projects.transferOwner(req.user!, idParam(req), res.locals.body.userId));
}
