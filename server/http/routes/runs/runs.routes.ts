import { z } from 'zod';
import { ManualCaptureBodySchema, RedoBodySchema, StartRunBodySchema, TraceQuerySchema } from '../../../../shared/schemas/runs';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { RunService } from '../../../services/run.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';
import { streamPieces } from '../../stream';
import { decimalIndex } from '../../../../shared/schemas/numbers';

const PointParamsSchema = z.object({ id: z.string().uuid('Not a valid id'), index: decimalIndex('Point index', 0, 1000) });

/** Runs: start under a job, read, operate (manual capture, redo, pause, resume, abort), raw trace. */
export function runRoutes(runs: RunService) {
  const t = routeTable('/api');
  const start = { params: IdParamSchema, body: StartRunBodySchema };
  t.add('post', '/jobs/:id/runs', 'jobs.perform', validate(start), async (_req, res) => {
    const { params, body } = input(res, start);
    res.status(201).json(await runs.start(currentUser(res), params.id, body));
  });
  const one = { params: IdParamSchema };
  t.add('get', '/runs/:id', 'runs.read', validate(one), async (_req, res) => {
    res.json(await runs.get(input(res, one).params.id));
  });
  const capture = { params: PointParamsSchema, body: ManualCaptureBodySchema };
  t.add('post', '/runs/:id/points/:index/capture', 'jobs.perform', validate(capture), async (_req, res) => {
    const { params, body } = input(res, capture);
    res.json(await runs.manualCapture(currentUser(res), params.id, params.index, body.reason));
  });
  const redo = { params: PointParamsSchema, body: RedoBodySchema };
  t.add('post', '/runs/:id/points/:index/redo', 'jobs.perform', validate(redo), async (_req, res) => {
    const { params, body } = input(res, redo);
    res.json(await runs.redo(currentUser(res), params.id, params.index, body.reason || undefined));
  });
  for (const what of ['pause', 'resume', 'abort'] as const) {
    t.add('post', `/runs/:id/${what}`, 'jobs.perform', validate(one), async (_req, res) => {
      res.json(await runs.control(currentUser(res), input(res, one).params.id, what));
    });
  }
  const trace = { params: IdParamSchema, query: TraceQuerySchema };
  t.add('get', '/runs/:id/trace', 'runs.read', validate(trace), async (req, res) => {
    const { params, query } = input(res, trace);
    // { items: TraceSample[], truncated }, already JSON, in pieces (see RunService.traceJson), written
    // as they come with the socket's back-pressure: no ETag hashing and never the whole body in memory.
    // Gzip when the client takes it (every browser does): a long trace is tens of MB of repetitive text.
    const gzip = req.acceptsEncodings('gzip', 'identity') === 'gzip';
    res.vary('Accept-Encoding');
    const pieces = await runs.traceJson(params.id, query, { gzip });
    if (gzip) res.set('Content-Encoding', 'gzip');
    await streamPieces(res, 'application/json', pieces);
  });
  return t;
}
