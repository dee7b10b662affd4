import { convertPressure, evaluateCalibration, orificeFlow, pointFlow, recommendIntervals } from '../../../../shared/calc';
import { EvaluateBodySchema, IntervalsBodySchema, OrificeBodySchema } from '../../../../shared/schemas/calc';
import { orificeSpecOf } from '../../../../shared/schemas/instruments';
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
  const orifice = { body: OrificeBodySchema };
  t.add('post', '/orifice', 'calc.orifice', validate(orifice), (_req, res) => {
    const b = input(res, orifice).body;
    const pe = orificeSpecOf({ ...b.element, flowUnit: b.flowUnit ?? b.element.flowUnit });
    if (!pe) throw badRequest('The element cannot be evaluated (gas without κ or p1, or an unknown flow unit)', { element: ['Incomplete element'] });
    const dpPa = convertPressure(b.dp, b.unit, 'Pa');
    const r = orificeFlow(pe.spec, dpPa);
    if (!r.ok) throw badRequest(r.reason, { _: [r.reason] });
    const at = pointFlow(pe.spec, dpPa, b.dpMax === undefined ? dpPa : convertPressure(b.dpMax, b.unit, 'Pa'), pe.flowUnit);
    res.json({
      ...r.value,
      flow: at?.flow ?? null,
      flowUnit: pe.flowUnit,
      pureRootDeparturePct: b.dpMax === undefined ? null : (at?.pureRootDeparturePct ?? null),
    });
  });
  return t;
}
