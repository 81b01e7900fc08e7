import { z } from 'zod';
import { LAYOUT_CHOICES } from '../../core/build/choose-layout.ts';
import { MAX_K } from '../../core/geo/manifest.ts';

/** The body of one message on the build queue: which version to build, with which layout. */
export const BuildMessageSchema = z.object({
  datasetId: z.string().min(1),
  version: z.number().int().min(1),
  layout: z.enum(LAYOUT_CHOICES),
  /** Candidate lists for the k nearest, k up to this (older messages: 1). */
  maxK: z.number().int().min(1).max(MAX_K).default(1),
});

export type BuildMessage = z.infer<typeof BuildMessageSchema>;
