import type { Request, Response } from 'express';
import * as users from '../services/user.service';
import { idParam } from '../middlewares/params';

export async function list(_req: Request, res: Response) {
  res.json(await users.listUsers(res.locals.query));
}

export async function directory(req: Request, res: Response) {
  res.json(await users.directory(req.user!, res.locals.query));
}

export async function create(req: Request, res: Response) {
  res.status(201).json(await users.createUser(req.user!.id, res.locals.body));
}

export async function update(req: Request, res: Response) {
  res.json(await users.updateUser(req.user!.id, idParam(req), res.locals.body));
}
