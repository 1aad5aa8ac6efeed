/**
 * Joint alignment of row and column factors from one fit (e.g. shop factors γ and category
 * factors δ of a factorization machine). Only the products γ_i·δ_j are identified; one orthogonal
 * R per draw applied to both leaves them unchanged (γR·(δR)ᵀ = γδᵀ), so the joint GPA must keep
 * every draw's products exactly and still recover both matrices.
 */
import { describe, expect, it } from 'vitest';
import { generalisedProcrustes, orthogonalProcrustes, procrustesDisparity } from '@/lib/align';
import { maxAbsDifference, multiply, products, simulateDraws } from './helpers';

// Sizes of the Larkspur Books demo: 120 shops, 40 categories; K = 3, D = 60, σ = 0.05.
const ROWS = 120;
const COLUMNS = 40;
const K = 3;
const D = 60;
const SIGMA = 0.05;
const simulation = simulateDraws(20261202, [ROWS, COLUMNS], K, D, SIGMA);
const [gammaTruth, deltaTruth] = simulation.truths as [Float64Array, Float64Array];
const [gammaDraws, deltaDraws] = simulation.draws as [Float32Array, Float32Array];
const joint = generalisedProcrustes(gammaDraws, D, ROWS, K, { partner: { draws: deltaDraws, n: COLUMNS } });

function frobenius(values: ArrayLike<number>): number {
  let total = 0;
  for (let index = 0; index < values.length; index++) total += (values[index] as number) ** 2;
  return Math.sqrt(total);
}

describe('joint generalised Procrustes with a partner matrix', () => {
  it('converges and returns the partner’s summaries with the right shapes', () => {
    expect(joint.converged).toBe(true);
    const partner = joint.partner;
    if (partner === undefined) throw new Error('partner result missing');
    expect(partner.mean).toHaveLength(COLUMNS * K);
    expect(partner.sd).toHaveLength(COLUMNS * K);
    expect(partner.spread).toHaveLength(COLUMNS);
    expect(partner.aligned).toHaveLength(D * COLUMNS * K);
  });

  it('recovers both factor matrices (disparity < 1e-3 each)', () => {
    expect(procrustesDisparity(gammaTruth, joint.mean, ROWS, K).disparity).toBeLessThan(1e-3);
    expect(procrustesDisparity(deltaTruth, joint.partner?.mean ?? new Float32Array(COLUMNS * K), COLUMNS, K).disparity).toBeLessThan(1e-3);
  });

  it('puts both means in one frame: the same global rotation maps each truth onto its mean', () => {
    const partnerMean = joint.partner?.mean ?? new Float32Array(COLUMNS * K);
    const gammaRotation = orthogonalProcrustes(gammaTruth, joint.mean, ROWS, K).rotation;
    const deltaRotation = orthogonalProcrustes(deltaTruth, partnerMean, COLUMNS, K).rotation;
    // Each is estimated from noisy means (error ≈ σ/√D per entry): agree to 0.02.
    expect(maxAbsDifference(gammaRotation, deltaRotation)).toBeLessThan(0.02);
  });

  it('keeps every draw’s products γ_i·δ_j (to float32 rounding)', () => {
    const partnerAligned = joint.partner?.aligned ?? new Float32Array(0);
    let worst = 0;
    let largest = 0;
    for (let d = 0; d < D; d++) {
      const before = products(gammaDraws, deltaDraws, ROWS, COLUMNS, K, d * ROWS * K, d * COLUMNS * K);
      const after = products(joint.aligned, partnerAligned, ROWS, COLUMNS, K, d * ROWS * K, d * COLUMNS * K);
      worst = Math.max(worst, maxAbsDifference(before, after));
      for (const value of before) largest = Math.max(largest, Math.abs(value));
    }
    // Products up to ~|γ||δ| ≈ 20; float32 storage of the factors adds ~1e-7 relative error per term.
    expect(worst).toBeLessThan(1e-5 * Math.max(1, largest));
  });

  it('products of the aligned means match the true products (relative Frobenius error < 2 %)', () => {
    const estimated = products(joint.mean, joint.partner?.mean ?? new Float32Array(COLUMNS * K), ROWS, COLUMNS, K);
    const truth = products(gammaTruth, deltaTruth, ROWS, COLUMNS, K);
    const error = frobenius(estimated.map((value, index) => value - (truth[index] as number)));
    // Each mean carries noise of sd σ/√D ≈ 0.0065 per entry, i.e. ≈ 0.5 % of the products' size.
    expect(error / frobenius(truth)).toBeLessThan(0.02);
  });

  it('applies one rotation per draw to both: the partner’s aligned draws are draw·R̂_d', () => {
    const partnerAligned = joint.partner?.aligned ?? new Float32Array(0);
    let worst = 0;
    for (let d = 0; d < D; d++) {
      const expected = multiply(deltaDraws.subarray(d * COLUMNS * K, (d + 1) * COLUMNS * K), joint.rotations, COLUMNS, K, K, d * K * K);
      worst = Math.max(worst, maxAbsDifference(partnerAligned.subarray(d * COLUMNS * K, (d + 1) * COLUMNS * K), expected));
    }
    expect(worst).toBeLessThan(1e-5);
  });

  it('where aligning each matrix on its own would change the per-draw products', () => {
    const gammaAlone = generalisedProcrustes(gammaDraws, D, ROWS, K);
    const deltaAlone = generalisedProcrustes(deltaDraws, D, COLUMNS, K);
    let worst = 0;
    for (let d = 0; d < D; d++) {
      const before = products(gammaDraws, deltaDraws, ROWS, COLUMNS, K, d * ROWS * K, d * COLUMNS * K);
      const after = products(gammaAlone.aligned, deltaAlone.aligned, ROWS, COLUMNS, K, d * ROWS * K, d * COLUMNS * K);
      worst = Math.max(worst, maxAbsDifference(before, after));
    }
    // Separate fits give slightly different rotations per draw (≈ σ/√rows each), so products move.
    expect(worst).toBeGreaterThan(1e-3);
  });

  it('refuses a partner with another number of draws or dimensions', () => {
    expect(() => generalisedProcrustes(gammaDraws, D, ROWS, K, { partner: { draws: deltaDraws.subarray(0, (D - 1) * COLUMNS * K), n: COLUMNS } })).toThrow(
      'generalisedProcrustes: partner.draws: expected 7200 values for a 60 × 40 × 3 matrix, got 7080',
    );
  });
});
