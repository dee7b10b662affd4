import { z } from 'zod';
import type { BenchService } from '../../../services/bench.service';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

const SamplesQuerySchema = z.object({
  after: z.coerce.number().int().min(0).default(0),
  limit: z.coerce.number().int().min(1).max(100_000).default(10_000),
  benchId: z.string().max(80).optional(),
});

/** Bench state: devices, counters, storage acknowledgement; stored samples by sequence number. */
export function benchRoutes(bench: BenchService) {
  const t = routeTable('/api/bench');
  t.add('get', '/', 'bench.read', (_req, res) => {
    res.json(bench.status());
  });
  const q = { query: SamplesQuerySchema };
  t.add('get', '/samples', 'bench.read', validate(q), async (_req, res) => {
    const { after, limit, benchId } = input(res, q).query;
    const rows = await bench.samplesAfter(after, limit, benchId);
    res.json({
      items: rows.map((r) => ({ seq: Number(r.seq), benchId: r.benchId, device: r.device, runId: r.runId, wallMs: r.wallMs, value: r.value, unit: r.unit, raw: r.raw })),
    });
  });
  return t;
}
