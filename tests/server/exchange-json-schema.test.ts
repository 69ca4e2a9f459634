import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { exchangeJsonSchema } from '@shared/schemas/exchange-json-schema';

describe('the published JSON Schema of the exchange file', () => {
  it('is the one generated from the zod schema (run "npm run schema" after changing it)', () => {
    const published = JSON.parse(readFileSync('docs/exchange-file.schema.json', 'utf8'));
    expect(published).toEqual(JSON.parse(JSON.stringify(exchangeJsonSchema())));
  });

  it('names every top-level part of a model', () => {
    const schema = exchangeJsonSchema() as { properties: Record<string, unknown>; required: string[] };
    expect(Object.keys(schema.properties)).toEqual(['format', 'version', 'name', 'signalStrength', 'regions', 'processes', 'floatingNorms', 'parametersOfInterest', 'templates', 'systematics', 'signalHypotheses']);
    expect(schema.required).toEqual(expect.arrayContaining(['format', 'version', 'name', 'regions', 'processes', 'templates']));
  });
});

describe('the example in docs/exchange-file.md', () => {
  it('is a valid exchange file', async () => {
    const { exchangeModelSchema } = await import('@shared/schemas/exchange');
    const doc = readFileSync('docs/exchange-file.md', 'utf8');
    const example = JSON.parse(doc.split('```json')[1].split('```')[0]);
    const parsed = exchangeModelSchema.safeParse(example);
    expect(parsed.error?.issues ?? []).toEqual([]);
  });
});
