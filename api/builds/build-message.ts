import { z } from 'zod';
import { LAYOUT_CHOICES } from '../../core/build/choose-layout.ts';

/** The body of one message on the build queue: which version to build, with which layout. */
export const BuildMessageSchema = z.object({
  datasetId: z.string().min(1),
  version: z.number().int().min(1),
  layout: z.enum(LAYOUT_CHOICES),
});

export type BuildMessage = z.infer<typeof BuildMessageSchema>;
