import { z } from 'zod';

/** Dataset slugs appear in URLs and commands: 1-63 lowercase letters, digits or dashes. */
export const SlugSchema = z
  .string()
  .regex(/^[a-z0-9][a-z0-9-]{0,62}$/, 'use 1-63 lowercase letters, digits or dashes, starting with a letter or digit');
