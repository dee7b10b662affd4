import { instrumentsApi } from '../../features/instruments/api/get-instruments';
import { INSTRUMENT_COLUMNS } from '../../features/instruments/components/instrument-columns';
import { InstrumentForm } from '../../features/instruments/components/instrument-form';
import { registerRoute } from './register-route';

export const { createLoader, Component, ErrorBoundary } = registerRoute({
  api: instrumentsApi,
  description: (total) =>
    total === undefined ? (
      'The transmitter register.'
    ) : (
      <>
        The transmitter register: <span className="num">{total}</span> tags with their ranges, output modes, tolerances and intervals.
      </>
    ),
  columns: INSTRUMENT_COLUMNS,
  aboutFiles: (i) => `${i.service} · ${i.location}`,
  Form: InstrumentForm,
});
