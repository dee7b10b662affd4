import type uPlot from 'uplot';
import { formatDate, formatTime } from './format';

/**
 * Time-axis labels for uPlot charts in the one date style and the site's zone, spaced so they
 * never overlap: at least `space` px between ticks (a "09:36:05" label is about 60 px at 12 px
 * type), seconds shown only when the ticks are less than a minute apart. x values are seconds.
 */
export function timeAxis(space = 84): Pick<uPlot.Axis, 'space' | 'values'> {
  return {
    space,
    values: (_u, splits, _axis, _space, incr) => splits.map((s) => (s == null ? '' : formatTime(s * 1000, incr < 60))),
  };
}

/** Date-axis labels ("2026-12-02") for charts over days or more, spaced so they never overlap. */
export function dateAxis(space = 96): Pick<uPlot.Axis, 'space' | 'values'> {
  return {
    space,
    values: (_u, splits) => splits.map((s) => (s == null ? '' : formatDate(new Date(s * 1000)))),
  };
}
