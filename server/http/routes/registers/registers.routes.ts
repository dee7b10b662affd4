import { ListQuerySchema } from '../../../../shared/schemas/errors';
import { InstrumentInputSchema } from '../../../../shared/schemas/instruments';
import { StandardInputSchema } from '../../../../shared/schemas/standards';
import { IdParamSchema } from '../../../../shared/schemas/users';
import { AcceptIntervalBodySchema } from '../../../../shared/schemas/drift';
import { ImportBodySchema } from '../../../../shared/schemas/register-csv';
import { INSTRUMENT_REGISTER, registerPath, STANDARD_REGISTER } from '../../../../shared/schemas/registers';
import type { z } from 'zod';
import type { Actor } from '../../../services/audit.service';
import type { CsvService } from '../../../services/csv.service';
import type { DriftService } from '../../../services/drift.service';
import type { RegisterService } from '../../../services/register.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable, type RouteTable } from '../../route-table';
import { csvBody } from './csv-body';

/** The import and export routes are optional so the register tables can be mounted on their own. */
export interface RegisterExtras {
  csv?: CsvService;
  drift?: DriftService;
}

const stamp = () => new Date().toISOString().slice(0, 10);

/** One register's entries as the service keeps them (instruments, standards). */
interface Entries<Input> {
  list: (q: z.output<typeof ListQuerySchema>) => Promise<unknown>;
  get: (id: string) => Promise<unknown>;
  create: (actor: Actor, input: Input) => Promise<unknown>;
  update: (actor: Actor, id: string, input: Input) => Promise<unknown>;
}

/** One register's CSV, when the server has the CSV service. */
interface RegisterCsv {
  exportAll: () => Promise<string>;
  importText: (actor: Actor, text: string, confirm: boolean) => Promise<unknown>;
}

/**
 * The routes of one register at its spec's path: the list, the CSV export and import (with the
 * CSV service), `more` (routes under an entry that must come before `/:id`), one entry, create
 * and edit. Reading takes `registers.read`, writing `registers.write`.
 */
function registerRoutes<S extends z.ZodType>(spec: { plural: string }, entries: Entries<z.output<S>>, inputSchema: S, csv: RegisterCsv | undefined, more?: (t: RouteTable) => void) {
  const t = routeTable(registerPath(spec));
  const list = { query: ListQuerySchema };
  t.add('get', '/', 'registers.read', validate(list), async (_req, res) => {
    res.json(await entries.list(input(res, list).query));
  });
  if (csv) {
    t.add('get', '/export.csv', 'registers.read', async (_req, res) => {
      res.attachment(`${spec.plural}-${stamp()}.csv`).type('text/csv; charset=utf-8').send(await csv.exportAll());
    });
    const imp = { body: ImportBodySchema };
    t.add('post', '/import', 'registers.write', ...csvBody, validate(imp), async (_req, res) => {
      const { body } = input(res, imp);
      const report = await csv.importText(currentUser(res), body.csv, body.confirm);
      res.status(body.confirm ? 201 : 200).json(report);
    });
  }
  more?.(t);
  const one = { params: IdParamSchema };
  t.add('get', '/:id', 'registers.read', validate(one), async (_req, res) => {
    res.json(await entries.get(input(res, one).params.id));
  });
  const create = { body: inputSchema };
  t.add('post', '/', 'registers.write', validate(create), async (_req, res) => {
    res.status(201).json(await entries.create(currentUser(res), input(res, create).body as z.output<S>));
  });
  const update = { params: IdParamSchema, body: inputSchema };
  t.add('put', '/:id', 'registers.write', validate(update), async (_req, res) => {
    const { params, body } = input(res, update);
    res.json(await entries.update(currentUser(res), params.id, body as z.output<S>));
  });
  return t;
}

export function instrumentRoutes(registers: RegisterService, extras: RegisterExtras = {}) {
  const { csv, drift } = extras;
  const csvOf = csv && { exportAll: () => csv.exportInstruments(), importText: (a: Actor, text: string, confirm: boolean) => csv.importInstruments(a, text, confirm) };
  return registerRoutes(INSTRUMENT_REGISTER, registers.instruments, InstrumentInputSchema, csvOf, (t) => {
    if (!drift) return;
    const one = { params: IdParamSchema };
    t.add('get', '/:id/drift', 'registers.read', validate(one), async (_req, res) => {
      res.json(await drift.report(input(res, one).params.id));
    });
    const accept = { params: IdParamSchema, body: AcceptIntervalBodySchema };
    t.add('post', '/:id/interval', 'registers.write', validate(accept), async (_req, res) => {
      const { params, body } = input(res, accept);
      res.json(await drift.acceptInterval(currentUser(res), params.id, body));
    });
  });
}

export function standardRoutes(registers: RegisterService, extras: RegisterExtras = {}) {
  const { csv } = extras;
  const csvOf = csv && { exportAll: () => csv.exportStandards(), importText: (a: Actor, text: string, confirm: boolean) => csv.importStandards(a, text, confirm) };
  return registerRoutes(STANDARD_REGISTER, registers.standards, StandardInputSchema, csvOf);
}
