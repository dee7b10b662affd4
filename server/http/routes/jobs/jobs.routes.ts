import { AssignJobBodySchema, ChecklistPatchSchema, CreateJobBodySchema, SubmitJobBodySchema } from '../../../../shared/schemas/jobs';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { JobService } from '../../../services/job.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

export function jobRoutes(jobs: JobService) {
  const t = routeTable('/api/jobs');
  t.add('get', '/', 'jobs.read', async (_req, res) => {
    res.json({ items: await jobs.list(currentUser(res)) });
  });
  const one = { params: IdParamSchema };
  t.add('get', '/:id', 'jobs.read', validate(one), async (_req, res) => {
    res.json(await jobs.detail(input(res, one).params.id));
  });
  const create = { body: CreateJobBodySchema };
  t.add('post', '/', 'jobs.plan', validate(create), async (_req, res) => {
    res.status(201).json(await jobs.create(currentUser(res), input(res, create).body));
  });
  const assign = { params: IdParamSchema, body: AssignJobBodySchema };
  t.add('post', '/:id/assign', 'jobs.plan', validate(assign), async (_req, res) => {
    const { params, body } = input(res, assign);
    res.json(await jobs.assign(currentUser(res), params.id, body.assigneeId));
  });
  const checklist = { params: IdParamSchema, body: ChecklistPatchSchema };
  t.add('put', '/:id/checklist', 'jobs.perform', validate(checklist), async (_req, res) => {
    const { params, body } = input(res, checklist);
    res.json(await jobs.updateChecklist(currentUser(res), params.id, body));
  });
  const submit = { params: IdParamSchema, body: SubmitJobBodySchema };
  t.add('post', '/:id/submit', 'jobs.perform', validate(submit), async (_req, res) => {
    const { params, body } = input(res, submit);
    res.json(await jobs.submit(currentUser(res), params.id, body));
  });
  return t;
}
