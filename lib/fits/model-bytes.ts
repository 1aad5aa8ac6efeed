/**
 * The fitted model as stored in fits.model, for predictions: a little-endian uint32 header length,
 * a UTF-8 JSON header (likelihood, rank, μ, σ, entity ids, covariate names), padding to 8 bytes,
 * then float64 arrays a, b, β, γ, δ and the covariate means. Binary rather than jsonb because γ and
 * δ run to millions of numbers for large designs, and float64 keeps the predictions exact.
 * Entity ids are kept here too, so predictions work even after the fitted factor sets are deleted.
 */
import { z } from 'zod';
import type { FittedModel } from '@/lib/fit/map';

const headerSchema = z.object({
  version: z.literal(1),
  likelihood: z.enum(['gaussian', 'bernoulli', 'poisson']),
  rank: z.number().int().positive(),
  mu: z.number(),
  sigma: z.number().nullable(),
  rowIds: z.array(z.string()),
  columnIds: z.array(z.string()),
  covariateNames: z.array(z.string()),
});

export function encodeModel(model: FittedModel): Buffer {
  const header = Buffer.from(
    JSON.stringify({ version: 1, likelihood: model.likelihood, rank: model.rank, mu: model.mu, sigma: model.sigma, rowIds: model.rowIds, columnIds: model.columnIds, covariateNames: model.covariateNames }),
    'utf8',
  );
  const start = Math.ceil((4 + header.length) / 8) * 8;
  const arrays = [model.a, model.b, model.beta, model.gamma, model.delta, model.covariateMeans];
  const floats = arrays.reduce((sum, a) => sum + a.length, 0);
  const out = Buffer.alloc(start + floats * 8);
  out.writeUInt32LE(header.length, 0);
  header.copy(out, 4);
  let at = start;
  for (const array of arrays) {
    for (let i = 0; i < array.length; i++) {
      out.writeDoubleLE(array[i] as number, at);
      at += 8;
    }
  }
  return out;
}

export function decodeModel(bytes: Buffer): FittedModel {
  const length = bytes.readUInt32LE(0);
  const header = headerSchema.parse(JSON.parse(bytes.subarray(4, 4 + length).toString('utf8')));
  const I = header.rowIds.length;
  const J = header.columnIds.length;
  const p = header.covariateNames.length;
  const K = header.rank;
  let at = Math.ceil((4 + length) / 8) * 8;
  const take = (count: number): Float64Array => {
    const out = new Float64Array(count);
    for (let i = 0; i < count; i++) {
      out[i] = bytes.readDoubleLE(at);
      at += 8;
    }
    return out;
  };
  const a = take(I);
  const b = take(J);
  const beta = take(p);
  const gamma = take(I * K);
  const delta = take(J * K);
  const covariateMeans = take(p);
  return { likelihood: header.likelihood, rank: K, rowIds: header.rowIds, columnIds: header.columnIds, covariateNames: header.covariateNames, mu: header.mu, a, b, beta, gamma, delta, sigma: header.sigma, covariateMeans };
}
