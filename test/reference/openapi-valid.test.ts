import { describe, expect, it } from 'vitest';
import { Validator } from '@seriousme/openapi-schema-validator';
import { openApiDocument } from '../../api/reference/openapi-document.ts';

/**
 * The reference document checked by an outside validator: npm @seriousme/openapi-schema-validator
 * 2.11.0, which applies the OpenAPI Initiative's published JSON Schema for 3.1 documents.
 */
describe('the OpenAPI document', () => {
  it('is valid OpenAPI 3.1 by the specification schema', async () => {
    const validator = new Validator();
    const result = await validator.validate(structuredClone(openApiDocument()) as unknown as Record<string, unknown>);
    expect(result.valid, JSON.stringify(result.errors, null, 1)?.slice(0, 2000)).toBe(true);
    expect(validator.version).toBe('3.1');
  });

  it('is refused by the same validator when a required part is missing (the check can fail)', async () => {
    const doc = structuredClone(openApiDocument()) as unknown as Record<string, unknown>;
    delete doc.info;
    const result = await new Validator().validate(doc);
    expect(result.valid).toBe(false);
  });
});
