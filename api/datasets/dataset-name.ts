import { z } from 'zod';

/**
 * A dataset's display name: what people read in the console and the CLI. Trimmed, 1-200
 * characters, on one line (control characters such as line breaks would garble lists).
 */
export const DatasetNameSchema = z
  .string()
  .trim()
  .min(1, 'a name of at least one visible character')
  .max(200, 'at most 200 characters')
  .regex(/^[^\p{Cc}]*$/u, 'no control characters such as line breaks or tabs');
