/**
 * "Does this request leave the event loop free?": start a heavy request, wait
 * until the server has handed its work to the measurement pool (or, were the
 * work done on the loop, until the request has been answered), then ask
 * `/api/health`. Returns the order the two answers came in ('health' first
 * when the work ran off the loop) with both answers.
 */
import request from 'supertest';
import type { Express } from 'express';
import { measurePoolStats } from '../../server/measure/pool';

export async function healthWhileHeavy<T>(app: Express, start: () => PromiseLike<T>): Promise<{ order: string[]; heavy: T; health: request.Response }> {
  const order: string[] = [];
  const before = measurePoolStats().started;
  const heavy = Promise.resolve(start()).then((r) => {
    order.push('heavy');
    return r;
  });
  while (measurePoolStats().started === before && order.length === 0) await new Promise((r) => setTimeout(r, 5));
  const health = await request(app).get('/api/health');
  order.push('health');
  return { order, heavy: await heavy, health };
}
