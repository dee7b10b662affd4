import { evaluateCalibration, recommendIntervals } from '../../../../shared/calc';
import { EvaluateBodySchema, IntervalsBodySchema } from '../../../../shared/schemas/calc';
import { badRequest } from '../../../errors';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

export function calcRoutes() {
  const t = routeTable('/api/calc');
  const evaluate = { body: EvaluateBodySchema };
  t.add('post', '/evaluate', 'calc.evaluate', validate(evaluate), (_req, res) => {
    const result = evaluateCalibration(input(res, evaluate).body);
    if (!result.ok) throw badRequest(result.reason, { _: [result.reason] });
    res.json(result.value);
  });
  const intervals = { body: IntervalsBodySchema };
  t.add('post', '/intervals', 'calc.intervals', validate(intervals), (_req, res) => {
    const b = input(res, intervals).body;
    // Interval test (Clopper–Pearson) and the exponential reliability model (ML estimate, range from both limits).
    res.json(recommendIntervals(b.history, b.currentIntervalDays, b.reliabilityTarget, b.confidence));
  });
  return t;
}
