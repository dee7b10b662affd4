import { HartReasonBodySchema, OutputTrimBodySchema, ZeroTrimBodySchema } from '../../../../shared/schemas/hart-job';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { HartJobService } from '../../../services/hart-job.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** HART in the job: the device as read, the check against the register and its resolution. */
export function hartRoutes(hart: HartJobService) {
  const t = routeTable('/api');
  const one = { params: IdParamSchema };
  t.add('get', '/jobs/:id/hart', 'runs.read', validate(one), async (_req, res) => {
    res.json(await hart.view(input(res, one).params.id));
  });
  t.add('post', '/jobs/:id/hart/check', 'jobs.perform', validate(one), async (_req, res) => {
    res.json(await hart.check(currentUser(res), input(res, one).params.id));
  });
  const reasoned = { params: IdParamSchema, body: HartReasonBodySchema };
  t.add('post', '/jobs/:id/hart/correct-register', 'jobs.perform', validate(reasoned), async (_req, res) => {
    const { params, body } = input(res, reasoned);
    res.json(await hart.correctRegister(currentUser(res), params.id, body.reason));
  });
  t.add('post', '/jobs/:id/hart/as-found', 'jobs.perform', validate(reasoned), async (_req, res) => {
    const { params, body } = input(res, reasoned);
    res.json(await hart.recordAsFound(currentUser(res), params.id, body.reason));
  });
  const outputTrim = { params: IdParamSchema, body: OutputTrimBodySchema };
  t.add('post', '/jobs/:id/hart/output-trim', 'jobs.perform', validate(outputTrim), async (_req, res) => {
    res.status(202).json(await hart.outputTrim(currentUser(res), input(res, outputTrim).params.id));
  });
  t.add('post', '/jobs/:id/hart/output-trim/abort', 'jobs.perform', validate(one), async (_req, res) => {
    res.json(await hart.abortTrim(currentUser(res), input(res, one).params.id));
  });
  const zeroTrim = { params: IdParamSchema, body: ZeroTrimBodySchema };
  t.add('post', '/jobs/:id/hart/zero-trim', 'jobs.perform', validate(zeroTrim), async (_req, res) => {
    res.json(await hart.zeroTrim(currentUser(res), input(res, zeroTrim).params.id));
  });
  return t;
}
