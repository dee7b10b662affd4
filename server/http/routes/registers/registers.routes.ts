import { ListQuerySchema } from '../../../../shared/schemas/errors';
import { InstrumentInputSchema } from '../../../../shared/schemas/instruments';
import { StandardInputSchema } from '../../../../shared/schemas/standards';
import { IdParamSchema } from '../../../../shared/schemas/users';
import { AcceptIntervalBodySchema } from '../../../../shared/schemas/drift';
import { ImportBodySchema } from '../../../../shared/schemas/register-csv';
import type { CsvService } from '../../../services/csv.service';
import type { DriftService } from '../../../services/drift.service';
import type { RegisterService } from '../../../services/register.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';
import { csvBody } from './csv-body';

/** The import and export routes are optional so the register tables can be mounted on their own. */
export interface RegisterExtras {
  csv?: CsvService;
  drift?: DriftService;
}

const stamp = () => new Date().toISOString().slice(0, 10);

export function instrumentRoutes(registers: RegisterService, extras: RegisterExtras = {}) {
  const t = routeTable('/api/instruments');
  const list = { query: ListQuerySchema };
  t.add('get', '/', 'registers.read', validate(list), async (_req, res) => {
    res.json(await registers.listInstruments(input(res, list).query));
  });
  const { csv, drift } = extras;
  if (csv) {
    t.add('get', '/export.csv', 'registers.read', async (_req, res) => {
      res.attachment(`instruments-${stamp()}.csv`).type('text/csv; charset=utf-8').send(await csv.exportInstruments());
    });
    const imp = { body: ImportBodySchema };
    t.add('post', '/import', 'registers.write', ...csvBody, validate(imp), async (_req, res) => {
      const { body } = input(res, imp);
      const report = await csv.importInstruments(currentUser(res), body.csv, body.confirm);
      res.status(body.confirm ? 201 : 200).json(report);
    });
  }
  if (drift) {
    const one = { params: IdParamSchema };
    t.add('get', '/:id/drift', 'registers.read', validate(one), async (_req, res) => {
      res.json(await drift.report(input(res, one).params.id));
    });
    const accept = { params: IdParamSchema, body: AcceptIntervalBodySchema };
    t.add('post', '/:id/interval', 'registers.write', validate(accept), async (_req, res) => {
      const { params, body } = input(res, accept);
      res.json(await drift.acceptInterval(currentUser(res), params.id, body));
    });
  }
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

export function standardRoutes(registers: RegisterService, extras: RegisterExtras = {}) {
  const t = routeTable('/api/standards');
  const list = { query: ListQuerySchema };
  t.add('get', '/', 'registers.read', validate(list), async (_req, res) => {
    res.json(await registers.listStandards(input(res, list).query));
  });
  const { csv } = extras;
  if (csv) {
    t.add('get', '/export.csv', 'registers.read', async (_req, res) => {
      res.attachment(`standards-${stamp()}.csv`).type('text/csv; charset=utf-8').send(await csv.exportStandards());
    });
    const imp = { body: ImportBodySchema };
    t.add('post', '/import', 'registers.write', ...csvBody, validate(imp), async (_req, res) => {
      const { body } = input(res, imp);
      const report = await csv.importStandards(currentUser(res), body.csv, body.confirm);
      res.status(body.confirm ? 201 : 200).json(report);
    });
  }
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
