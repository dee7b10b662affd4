import { evaluateCalibration } from '../../../../shared/calc';
import { EvaluateBodySchema } from '../../../../shared/schemas/calc';
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
  return t;
}
