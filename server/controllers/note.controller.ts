import type { Request, Response } from 'express';
import * as notes from '../services/note.service';
import { idParam } from '../middlewares/params';

export async function list(req: Request, res: Response) {
  res.json(await notes.listThreads(req.user!, idParam(req, 'sectionId')));
}
export async function create(req: Request, res: Response) {
  res.status(201).json(await notes.createThread(req.user!, idParam(req, 'sectionId'), res.locals.body));
}
export async function get(req: Request, res: Response) {
  res.json(await notes.getThread(req.user!, idParam(req)));
}
export async function setState(req: Request, res: Response) {
  res.json(await notes.setResolved(req.user!, idParam(req), res.locals.body.resolved));
}
export async function reply(req: Request, res: Response) {
  res.status(201).json(await notes.addMessage(req.user!, idParam(req), res.locals.body));
}
export async function edit(req: Request, res: Response) {
  res.json(await notes.editMessage(req.user!, idParam(req), res.locals.body));
}
export async function remove(req: Request, res: Response) {
  res.json(await notes.deleteMessage(req.user!, idParam(req)));
}
