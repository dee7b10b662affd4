import { ListQuerySchema } from '../../../../shared/schemas/errors';
import { InstrumentInputSchema } from '../../../../shared/schemas/instruments';
import { StandardInputSchema } from '../../../../shared/schemas/standards';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { RegisterService } from '../../../services/register.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

export function instrumentRoutes(registers: RegisterService) {
  const t = routeTable('/api/instruments');
  const list = { query: ListQuerySchema };
  t.add('get', '/', 'registers.read', validate(list), async (_req, res) => {
    res.json(await registers.listInstruments(input(res, list).query));
  });
  const one = { params: IdParamSchema };
  t.add('get', '/:id', 'registers.read', validate(one), async (_req, res) => {
    res.json(await registers.getInstrument(input(res, one).params.id));
  });
  const create = { body: InstrumentInputSchema };
  t.add('post', '/', 'registers.write', validate(create), async (_req, res) => {
    res.status(201).json(await registers.createInstrument(currentUser(res), input(res, create).body));
  });
  const update = { params: IdParamSchema, body: InstrumentInputSchema };
  t.add('put', '/:id', 'registers.write', validate(update), async (_req, res) => {
    const { params, body } = input(res, update);
    res.json(await registers.updateInstrument(currentUser(res), params.id, body));
  });
  return t;
}

export function standardRoutes(registers: RegisterService) {
  const t = routeTable('/api/standards');
  const list = { query: ListQuerySchema };
  t.add('get', '/', 'registers.read', validate(list), async (_req, res) => {
    res.json(await registers.listStandards(input(res, list).query));
  });
  const one = { params: IdParamSchema };
  t.add('get', '/:id', 'registers.read', validate(one), async (_req, res) => {
    res.json(await registers.getStandard(input(res, one).params.id));
  });
  const create = { body: StandardInputSchema };
  t.add('post', '/', 'registers.write', validate(create), async (_req, res) => {
    res.status(201).json(await registers.createStandard(currentUser(res), input(res, create).body));
  });
  const update = { params: IdParamSchema, body: StandardInputSchema };
  t.add('put', '/:id', 'registers.write', validate(update), async (_req, res) => {
    const { params, body } = input(res, update);
    res.json(await registers.updateStandard(currentUser(res), params.id, body));
  });
  return t;
}
