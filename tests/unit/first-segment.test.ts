import { describe, expect, it } from 'vitest';
import express, { Router } from 'express';
import request from 'supertest';
import { byFirstSegment, firstSegmentOf, firstSegments } from '../../server/routes/first-segment';
import { routeTable } from '../../server/openapi/route-table';

function sample() {
  const r = Router();
  r.get('/analogues', (_req, res) => res.json({ at: 'list' }));
  r.get('/analogues/:id', (req, res) => res.json({ at: 'one', id: req.params.id }));
  r.post('/buildups/:id/promote', (_req, res) => res.json({ at: 'promote' }));
  return r;
}

describe('routers entered by first path segment', () => {
  it('reads the first segments from the route table, lower-cased', () => {
    const r = Router();
    r.get('/Alpha/x', (_q, s) => s.end());
    r.get('/beta', (_q, s) => s.end());
    expect([...firstSegments(r)!].sort()).toEqual(['alpha', 'beta']);
  });

  it('reads the first segment of a URL without parsing it', () => {
    expect(firstSegmentOf('/analogues')).toBe('analogues');
    expect(firstSegmentOf('/Analogues/12/crop')).toBe('analogues');
    expect(firstSegmentOf('/analogues?r.heightM=60..250')).toBe('analogues');
    expect(firstSegmentOf('/analogues#x')).toBe('analogues');
    expect(firstSegmentOf('/')).toBe('');
    expect(firstSegmentOf('/?q=1')).toBe('');
  });

  it('always enters a router with a parameter first, a pattern, or router-level middleware', () => {
    const param = Router();
    param.get('/:id', (_q, s) => s.end());
    const wild = Router();
    wild.get('/files/*rest', (_q, s) => s.end());
    wild.get('/{opt}', (_q, s) => s.end());
    const used = Router();
    used.use((_q, _s, n) => n());
    used.get('/x', (_q, s) => s.end());
    const regex = Router();
    regex.get(/^\/r/, (_q, s) => s.end());
    for (const r of [param, wild, used, regex]) {
      expect(firstSegments(r)).toBeNull();
      expect(byFirstSegment(r)).toBe(r);
    }
  });

  it('answers the same as the bare router, and passes other paths on without trying its routes', async () => {
    const app = express();
    const entered: string[] = [];
    const inner = sample();
    app.use('/api', (req, _res, next) => {
      entered.push(req.path);
      next();
    });
    app.use('/api', byFirstSegment(inner));
    app.use('/api', (req, res) => res.status(404).json({ missed: req.path }));
    expect((await request(app).get('/api/analogues')).body).toEqual({ at: 'list' });
    expect((await request(app).get('/api/ANALOGUES/12')).body).toEqual({ at: 'one', id: '12' }); // Express matches case-insensitively
    expect((await request(app).post('/api/buildups/4/promote')).body).toEqual({ at: 'promote' });
    expect((await request(app).get('/api/sections/3')).body).toEqual({ missed: '/sections/3' });
    expect((await request(app).get('/api/analoguesx')).body).toEqual({ missed: '/analoguesx' });
    expect((await request(app).get('/api/analogues/1/2')).body).toEqual({ missed: '/analogues/1/2' }); // entered, no route matched
  });

  it('stays visible to the route table walker', () => {
    const app = express();
    app.use('/api', byFirstSegment(sample()));
    expect(routeTable(app)).toEqual(['GET /api/analogues', 'GET /api/analogues/:id', 'POST /api/buildups/:id/promote']);
  });
});
