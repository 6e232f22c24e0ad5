import { z } from 'zod';
import { instrumentInputSchema } from './instrument.schema';

/** One invented demo instrument in content/instruments.json: the login of its builder and the instrument as the API takes it. */
export const demoInstrumentSchema = z.strictObject({ owner: z.string().min(1), instrument: instrumentInputSchema });

/** The whole content/instruments.json file. */
export const demoInstrumentsFileSchema = z.strictObject({ note: z.string().min(1), instruments: z.array(demoInstrumentSchema) });

/** A demo instrument, validated (defaults applied). */
export type DemoInstrument = z.output<typeof demoInstrumentSchema>;
