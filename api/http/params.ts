import { z } from 'zod';
import { SlugSchema } from '../../core/naming/dataset-slug.ts';
import { ApiError } from './api-error.ts';

export { SlugSchema };

/** Parses a path parameter, refusing with 400 and the parameter's name. */
export function pathSlug(value: string | undefined, field: string): string {
  const parsed = SlugSchema.safeParse(value);
  if (!parsed.success) throw new ApiError(400, 'invalid_' + field, `${field}: ${parsed.error.issues[0]?.message}`, field);
  return parsed.data;
}

export function pathVersion(value: string | undefined): number {
  const n = Number(value);
  if (!value || !/^\d{1,9}$/.test(value) || !Number.isSafeInteger(n) || n < 1) {
    throw new ApiError(400, 'invalid_version', `version: expected a whole number >= 1, got "${value ?? ''}"`, 'version');
  }
  return n;
}

/** Reads a JSON body and validates it; a body that is not JSON is a 400 naming "body". */
export async function jsonBody<T extends z.ZodType>(req: Request, schema: T): Promise<z.infer<T>> {
  let raw: unknown;
  try {
    raw = await req.json();
  } catch {
    throw new ApiError(400, 'invalid_json', 'body: expected a JSON object', 'body');
  }
  return schema.parse(raw);
}
