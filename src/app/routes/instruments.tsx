import type { Instrument } from '../../../shared/schemas/instruments';
import { INSTRUMENT_COLUMNS as INSTRUMENT_CSV_COLUMNS } from '../../../shared/schemas/register-csv';
import type { RegisterPageConfig } from '../../components/registers/register-page';
import { DATASHEET } from '../../components/ui/attachments';
import { instrumentsQueryOptions, useInstruments } from '../../features/instruments/api/get-instruments';
import { INSTRUMENT_COLUMNS } from '../../features/instruments/components/instrument-columns';
import { InstrumentForm } from '../../features/instruments/components/instrument-form';
import { registerRoute } from './register-route';

const INSTRUMENTS: RegisterPageConfig<Instrument> = {
  title: 'Instruments',
  description: (total) =>
    total === undefined ? (
      'The transmitter register.'
    ) : (
      <>
        The transmitter register: <span className="num">{total}</span> tags with their ranges, output modes, tolerances and intervals.
      </>
    ),
  noun: 'instrument',
  registerName: 'Instrument register',
  searchPlaceholder: 'Search tag, service, location…',
  csvColumns: INSTRUMENT_CSV_COLUMNS,
  initialSort: { sort: 'tag', dir: 'asc' },
  columns: INSTRUMENT_COLUMNS,
  rowName: (i) => i.tag,
  useList: useInstruments,
  files: {
    label: 'Datasheets',
    description: (i) => `${i.service} · ${i.location}`,
    spec: DATASHEET,
  },
  renderForm: ({ row, onSaved, onCancel }) => <InstrumentForm instrument={row} onSaved={onSaved} onCancel={onCancel} />,
};

export const { createLoader, Component, ErrorBoundary } = registerRoute(INSTRUMENTS, (queryClient) => queryClient.prefetchQuery(instrumentsQueryOptions()));
