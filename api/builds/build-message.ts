import { z } from 'zod';

/** The body of one message on the build queue: which version to build, with which layout. */
export const BuildMessageSchema = z.object({
  datasetId: z.string().min(1),
  version: z.number().int().min(1),
  layout: z.enum(['auto', 'grid', 'adaptive']),
});

export type BuildMessage = z.infer<typeof BuildMessageSchema>;
