import { writeFileSync } from 'node:fs';
import { exchangeJsonSchema } from '../shared/schemas/exchange-json-schema';

/** npm run schema: writes the exchange file's JSON Schema, generated from the zod schema, into docs/. */
writeFileSync('docs/exchange-file.schema.json', JSON.stringify(exchangeJsonSchema(), null, 2) + '\n');
console.log('wrote docs/exchange-file.schema.json');
