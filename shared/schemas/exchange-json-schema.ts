import { z } from 'zod';
import { EXCHANGE_FORMAT, EXCHANGE_VERSION, exchangeModelSchema } from './exchange';

/**
 * The exchange file's JSON Schema, generated from the zod schema (the one source of truth).
 * Cross-field rules (bin counts, references, unique keys) are checked by the zod schema only;
 * the description says so.
 */
export function exchangeJsonSchema() {
  const schema = z.toJSONSchema(exchangeModelSchema, { io: 'input', unrepresentable: 'any' });
  return {
    ...schema,
    $id: `https://plumbline.example/schemas/${EXCHANGE_FORMAT}.v${EXCHANGE_VERSION}.json`,
    title: 'Plumbline model exchange file',
    description:
      'A whole binned model: regions with bin edges and data, processes, nominal templates with variances, floating normalisations, systematics with their scale or shape effects, and (version 2) the signal hypotheses a scan fits in turn. Also checked on import: bin counts match each region, every reference names an existing region, process or template, keys are unique, bin edges increase; a hypothesis replaces signal templates the model has, has a value of its own, and gives a shape effect wherever the model varies a replaced template by shape.',
  };
}
