import { z } from 'zod';
import { isPackableAscii, unitOfCode } from '../../../../shared/protocol/hart';
import type { SimController } from '../../../bench/sim-control';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

const finite = z.number().finite();
const DeviceFaultsSchema = z
  .object({
    unplugged: z.boolean(),
    garbage: z.boolean(),
    lateReplyMs: finite.min(0).max(60_000),
    dropReplies: finite.min(0).max(1),
    wrongUnit: z.string().max(20).nullable(),
    overflow: z.boolean(),
    burstBytes: z.number().int().min(0).max(4096),
  })
  .partial()
  .strict();

const HartFaultsSchema = z
  .object({
    unplugged: z.boolean(),
    noAnswer: finite.min(0).max(1),
    checksumErrors: finite.min(0).max(1),
    busy: z.boolean(),
    lateReplyMs: finite.min(0).max(60_000),
    garbage: z.boolean(),
    configChanged: z.boolean(),
  })
  .partial()
  .strict();

const packed = (chars: number) => z.string().refine((v) => isPackableAscii(v, chars), `at most ${chars} characters from space to underscore (packed ASCII)`);

/** The simulated HART device's own configuration. */
const HartConfigSchema = z
  .object({
    tag: packed(8),
    descriptor: packed(16),
    date: z.object({ year: z.number().int().min(1900).max(2155), month: z.number().int().min(1).max(12), day: z.number().int().min(1).max(31) }).strict(),
    unitCode: z.number().int().refine((c) => unitOfCode(c) !== undefined, 'a HART unit code Stillpoint maps (common table 2)'),
    writeProtect: z.boolean(),
    alarmSelection: z.number().int().min(0).max(255),
    pollingAddress: z.number().int().min(0).max(63),
  })
  .partial()
  .strict();

const cutoff = z.discriminatedUnion('mode', [
  z.object({ mode: z.literal('none') }),
  z.object({ mode: z.literal('clamp'), flowPct: finite.min(0).max(100) }),
  z.object({ mode: z.literal('linear-below'), breakpointDpPct: finite.positive().max(100) }),
]);

/** Mirrors SimRequest (server/bench/sim-control.ts); the autopilot follows the bench's current run. */
export const SimBodySchema = z
  .object({
    transmitter: z
      .object({
        lrv: finite,
        urv: finite,
        outputMode: z.enum(['linear', 'sqrt-transmitter', 'sqrt-host']),
        cutoff,
        zeroErrorPct: finite.min(-100).max(100),
        spanErrorPct: finite.min(-100).max(100),
        nonLinearityPct: finite.min(-100).max(100),
        hysteresisPct: finite.min(0).max(100),
        outputNoiseMa: finite.min(0).max(5),
        failure: z.enum(['none', 'low', 'high']),
        lowFailureMa: finite.min(0).max(4),
        highFailureMa: finite.min(20).max(25),
        daErrorAt4Ma: finite.min(-1).max(1),
        daErrorAt20Ma: finite.min(-1).max(1),
        dampingS: finite.min(0).max(60),
      })
      .partial()
      .strict(),
    source: z
      .object({
        timeConstantS: finite.min(0.001).max(600),
        noise: finite.min(0),
        noiseCorrelationS: finite.min(0.001).max(600),
        overshoot: finite.min(0).max(2),
        leakPerMin: finite.min(0),
        isolateBand: finite.positive(),
      })
      .partial()
      .strict(),
    setpoint: z.object({ value: finite, overshoot: finite.min(0).max(2).optional() }).strict(),
    faults: z.object({ pressure: DeviceFaultsSchema, current: DeviceFaultsSchema, hart: HartFaultsSchema }).partial().strict(),
    hart: HartConfigSchema,
    trim: z
      .object({ sensorZero: finite, loopAt4Ma: finite.min(-1).max(1), loopAt20Ma: finite.min(-1).max(1), fixedMa: finite.min(3.5).max(23).nullable() })
      .partial()
      .strict(),
    autopilot: z.union([
      z.literal('stop'),
      z
        .object({
          speed: finite.min(0.1).max(1000),
          holdSeconds: finite.positive().max(3600),
          overshoot: z.object({ fraction: finite.positive().max(2), points: z.array(z.number().int().min(0)).optional() }).strict(),
          leak: z.object({ perMin: finite.positive(), points: z.array(z.number().int().min(0)).optional() }).strict(),
          keepTransmitter: z.boolean(),
        })
        .partial()
        .strict(),
    ]),
  })
  .partial()
  .strict();

/** The simulated rig (BENCH=sim only): transmitter errors, noise, leak, overshoot, faults, autopilot. */
export function simRoutes(sim: SimController) {
  const t = routeTable('/api/sim');
  t.add('get', '/', 'sim.control', (_req, res) => {
    res.json(sim.snapshot());
  });
  const body = { body: SimBodySchema };
  t.add('post', '/', 'sim.control', validate(body), (_req, res) => {
    res.json(sim.apply(input(res, body).body));
  });
  return t;
}
