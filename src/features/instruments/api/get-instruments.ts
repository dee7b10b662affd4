import { InstrumentSchema, type Instrument, type InstrumentInput } from '../../../../shared/schemas/instruments';
import { INSTRUMENT_REGISTER } from '../../../../shared/schemas/registers';
import { registerApi } from '../../../lib/register-api';

/** The instrument register's API: list, its query options, and save (create or edit). */
export const instrumentsApi = registerApi<Instrument, InstrumentInput>(INSTRUMENT_REGISTER, InstrumentSchema);
