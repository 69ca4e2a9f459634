import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptions } from '@shared/schemas/fit';
import { inputSha256 } from './engine-identity';

/**
 * A fit's input as the database holds it: the version's model as JSON text, and the options.
 * Parsing and checking the model of a large analysis (megabytes) and hashing it take a few hundred
 * milliseconds, so they happen where the fit runs (`readFitInput`), not on the request thread.
 */
export type FitInput = { modelText: string; options: unknown };

/** The checked model and options of a fit, and the SHA-256 of exactly this input. */
export function readFitInput(input: FitInput): { model: ExchangeModel; options: FitOptions; inputSha256: string } {
  const model = exchangeModelSchema.parse(JSON.parse(input.modelText));
  const options = fitOptionsSchema.parse(input.options);
  return { model, options, inputSha256: inputSha256(model, options) };
}
