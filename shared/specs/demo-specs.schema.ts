import { z } from 'zod';
import { specInputSchema } from './spec-library.schema';

/** One invented starter spec in content/specs.json: the login of its keeper and the spec with its first version, as the API takes it. */
export const demoSpecSchema = z.strictObject({ owner: z.string().min(1), spec: specInputSchema });

/** The whole content/specs.json file. */
export const demoSpecsFileSchema = z.strictObject({ note: z.string().min(1), specs: z.array(demoSpecSchema) });

/** A demo spec, validated (defaults applied). */
export type DemoSpec = z.output<typeof demoSpecSchema>;
