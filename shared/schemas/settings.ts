import { z } from 'zod';
import { DECISION_RULES } from '../calc';
import { isTimeZone } from '../format/dates';

/**
 * Site settings (stored as JSON on the site row; parsed with this schema in the repository).
 * Every field is optional: an absent field takes the product default named beside it. A stored
 * value that does not match is dropped to its default rather than cast.
 */
export const SiteSettingsSchema = z.object({
  /** Hold time, s (default 30; HOLD_SECONDS in the environment overrides). */
  holdSeconds: z.number().positive().max(3600).optional().catch(undefined),
  /** Decision rule (default guard band w = U). */
  decisionRule: z.enum(DECISION_RULES).optional().catch(undefined),
  /** Capture window half-width, % of span (default 0.5). */
  windowPctOfSpan: z.number().positive().max(10).optional().catch(undefined),
  /**
   * Coverage probability for U, 0.5–1 exclusive (default 0.9545 = 95.45 %): k = t_p(ν_eff),
   * JCGM 100:2008 G.3–G.4.
   */
  coverageProbability: z.number().gt(0.5).lt(1).optional().catch(undefined),
  /** A coverage factor the site fixes whatever ν_eff is (unset by default: k from ν_eff). */
  coverageFactor: z.number().positive().max(10).optional().catch(undefined),
  /** Minimum TUR for a decision (unset by default); below it a point is undecided. */
  minimumTur: z.number().positive().max(100).optional().catch(undefined),
  /**
   * Margin above the URV, % of span, past which the applied pressure raises an `overrange` warning
   * during a run (default 10: our own choice, common practice to keep well inside the transmitter's
   * overpressure rating, which the site procedure and the maker's data govern).
   */
  overrangeMarginPct: z.number().min(0).max(100).optional().catch(undefined),
  /** End-of-period reliability target for interval analysis, 0–1 (default 0.95). */
  intervalReliabilityTarget: z.number().gt(0).lt(1).optional().catch(undefined),
  /** Confidence of the interval test's binomial limits, 0–1 (default 0.5). */
  intervalConfidence: z.number().gt(0).lt(1).optional().catch(undefined),
  /** Per instrument kind (output mode) overrides of the interval targets. */
  intervalTargetsByKind: z
    .record(z.string(), z.object({ reliabilityTarget: z.number().gt(0).lt(1).optional(), confidence: z.number().gt(0).lt(1).optional() }))
    .optional()
    .catch(undefined),
  /**
   * The site's time zone, an IANA name such as 'Europe/London' (default 'UTC'). Dates and times
   * are shown in it, and "today" (standards' due state, calibration dates) is taken in it by the
   * server and the client alike.
   */
  timeZone: z.string().refine(isTimeZone, 'Choose a known time zone, e.g. Europe/London').optional().catch(undefined),
});
export type SiteSettings = z.infer<typeof SiteSettingsSchema>;

/** Default of {@link SiteSettings.overrangeMarginPct}, % of span. */
export const DEFAULT_OVERRANGE_MARGIN_PCT = 10;

/** Parse stored settings JSON text; unreadable text gives the defaults (an empty object). */
export function parseSiteSettings(text: string | null | undefined): SiteSettings {
  let raw: unknown;
  try {
    raw = text ? JSON.parse(text) : {};
  } catch {
    raw = {};
  }
  const r = SiteSettingsSchema.safeParse(raw);
  return r.success ? r.data : {};
}

/** Body of `PUT /api/site/time-zone` (admin): the site's IANA time zone. */
export const SiteTimeZoneBodySchema = z
  .object({
    timeZone: z.string({ message: 'Choose a time zone' }).trim().refine(isTimeZone, 'Choose a known time zone, e.g. Europe/London'),
  })
  .strict();
export type SiteTimeZoneBody = z.infer<typeof SiteTimeZoneBodySchema>;
