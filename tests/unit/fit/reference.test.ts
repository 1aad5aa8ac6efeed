/**
 * lib/fit against reference libraries: scikit-learn (Debian's python3-sklearn 1.2.1), values in
 * tests/fixtures/fit/fit-reference.json written by scripts/reference/fit_reference.py; and R's glm
 * (r-base 4.2) for Poisson with an exposure offset, values in tests/fixtures/fit/poisson-glm.json
 * written by scripts/reference/fit_poisson_glm.R.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '@/lib/align/random';
import { fitMap, prepareDesign, toFittedModel } from '@/lib/fit/map';
import { auc, logLoss, meanPoissonDeviance } from '@/lib/fit/metrics';
import { linearPredictor } from '@/lib/fit/model';
import { buildDesign } from '@/lib/fit/observations';
import type { Likelihood } from '@/lib/fit/settings';

interface RegressionCase {
  rows: number;
  columns: number;
  header: string[];
  cells: string[][];
  intercept: number;
  coefficients: number[];
  eta: number[];
}

interface Fixture {
  source: string;
  gaussian: RegressionCase;
  bernoulli: RegressionCase;
  metrics: { y: number[]; probability: number[]; logLoss: number; auc: number; distinctScores: number; counts: number[]; means: number[]; meanPoissonDeviance: number };
}

const fixture = JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../fixtures/fit/fit-reference.json'), 'utf8')) as Fixture;

describe('metrics match scikit-learn on fixed inputs', () => {
  const y = Float64Array.from(fixture.metrics.y);
  const probability = Float64Array.from(fixture.metrics.probability);
  it('log loss = sklearn.metrics.log_loss', () => {
    expect(logLoss(y, probability)).toBeCloseTo(fixture.metrics.logLoss, 12);
  });
  it('AUC with tied scores = sklearn.metrics.roc_auc_score', () => {
    // the fixture's 60 scores take only a handful of distinct values, so ties are the rule
    expect(fixture.metrics.distinctScores).toBeLessThan(20);
    expect(auc(y, probability)).toBeCloseTo(fixture.metrics.auc, 12);
  });
  it('mean Poisson deviance = sklearn.metrics.mean_poisson_deviance (zero counts included)', () => {
    expect(fixture.metrics.counts).toContain(0);
    expect(meanPoissonDeviance(Float64Array.from(fixture.metrics.counts), Float64Array.from(fixture.metrics.means))).toBeCloseTo(fixture.metrics.meanPoissonDeviance, 12);
  });
});

/**
 * Main-effects-only fit (rank 0) with the prior scale at its maximum (10,000, a penalty of
 * 5·10⁻⁹ per squared coefficient: unpenalised for any practical purpose) against
 * LinearRegression / LogisticRegression(penalty=None) on the same one-hot design. Entity effects
 * are compared as contrasts to the first entity (the one-hot reference), since only contrasts are
 * identified without a penalty; fitted linear predictors and covariate coefficients directly.
 */
async function mainEffectsFit(likelihood: Likelihood, reference: RegressionCase) {
  const design = buildDesign('reference.csv', reference.header, reference.cells, {
    rowColumn: 'shop',
    columnColumn: 'category',
    outcome: 'y',
    covariates: ['footfall', 'weather', 'region'],
    offset: null,
    offsetScale: 'log',
    likelihood,
    rank: 1,
  });
  const prepared = prepareDesign(design);
  const fit = await fitMap(
    prepared.data,
    { kind: 'mainEffects', likelihood, rows: design.rowIds.length, columns: design.columnIds.length, p: design.p, rank: 0, penalty: { priorScale: 10000, hierarchical: false } },
    mulberry32(1),
    { ftol: 0, gtol: 1e-13, maxIterations: 20000 },
  );
  const model = toFittedModel(prepared, fit);
  const eta = linearPredictor(fit.theta, prepared.data, fit.layout);
  return { design, model, eta, fit };
}

describe.each([
  ['gaussian', 'LinearRegression'],
  ['bernoulli', 'LogisticRegression(penalty=None)'],
] as const)('main-effects-only %s fit matches sklearn %s to 1e-4', (likelihood, _name) => {
  const reference = fixture[likelihood];
  const run = mainEffectsFit(likelihood, reference);

  it('reads the table with the same one-hot encoding', async () => {
    const { design } = await run;
    expect(design.covariateNames).toEqual(['footfall', 'weather', 'region=south', 'region=east']);
    expect(design.rowIds).toHaveLength(reference.rows);
    expect(design.rowIds[0]).toBe('s0');
    expect(design.columnIds[0]).toBe('k0');
  });

  it('fitted linear predictors', async () => {
    const { eta, fit } = await run;
    // ftol 0 runs until the gradient test or until no step can lower the objective in float64
    expect(fit.reason).not.toBe('max-iterations');
    expect(fit.gradientNorm).toBeLessThan(1e-8);
    let worst = 0;
    reference.eta.forEach((value, t) => (worst = Math.max(worst, Math.abs(value - (eta[t] as number)))));
    expect(worst).toBeLessThan(1e-4);
  });

  it('covariate coefficients and entity contrasts', async () => {
    const { model } = await run;
    const I = reference.rows;
    const J = reference.columns;
    const coefficients = reference.coefficients;
    for (let i = 1; i < I; i++) expect(Math.abs((model.a[i] as number) - (model.a[0] as number) - (coefficients[i - 1] as number))).toBeLessThan(1e-4);
    for (let j = 1; j < J; j++) expect(Math.abs((model.b[j] as number) - (model.b[0] as number) - (coefficients[I - 1 + j - 1] as number))).toBeLessThan(1e-4);
    for (let q = 0; q < 4; q++) expect(Math.abs((model.beta[q] as number) - (coefficients[I - 1 + J - 1 + q] as number))).toBeLessThan(1e-4);
    // sklearn's intercept is the prediction for the reference shop, category and region at x = 0
    expect(Math.abs(model.mu + (model.a[0] as number) + (model.b[0] as number) - reference.intercept)).toBeLessThan(1e-4);
  });
});

interface GlmFixture {
  source: string;
  rows: number;
  columns: number;
  header: string[];
  cells: string[][];
  coefficientNames: string[];
  coefficients: number[];
  eta: number[];
  deviance: number;
}

const glm = JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../fixtures/fit/poisson-glm.json'), 'utf8')) as GlmFixture;

describe('main-effects-only Poisson fit with an exposure offset matches R glm(family = poisson) to 1e-4', () => {
  const run = (async () => {
    const design = buildDesign('counts.csv', glm.header, glm.cells, {
      rowColumn: 'shop',
      columnColumn: 'category',
      outcome: 'count',
      covariates: ['temperature'],
      offset: 'exposure',
      offsetScale: 'exposure',
      likelihood: 'poisson',
      rank: 1,
    });
    const prepared = prepareDesign(design);
    const fit = await fitMap(
      prepared.data,
      { kind: 'mainEffects', likelihood: 'poisson', rows: design.rowIds.length, columns: design.columnIds.length, p: design.p, rank: 0, penalty: { priorScale: 10000, hierarchical: false } },
      mulberry32(1),
      { ftol: 0, gtol: 1e-13, maxIterations: 20000 },
    );
    return { design, fit, model: toFittedModel(prepared, fit), eta: linearPredictor(fit.theta, prepared.data, fit.layout) };
  })();

  it('fitted linear predictors (offset included) and deviance', async () => {
    const { eta, design } = await run;
    let worst = 0;
    glm.eta.forEach((value, t) => (worst = Math.max(worst, Math.abs(value - (eta[t] as number)))));
    expect(worst).toBeLessThan(1e-4);
    const mean = eta.map(Math.exp);
    expect(meanPoissonDeviance(design.y, mean) * design.n).toBeCloseTo(glm.deviance, 4);
  });

  it('temperature coefficient and shop/category contrasts', async () => {
    const { model } = await run;
    const c = glm.coefficients;
    expect(glm.coefficientNames[1]).toBe('shops01');
    for (let i = 1; i < glm.rows; i++) expect(Math.abs((model.a[i] as number) - (model.a[0] as number) - (c[i] as number))).toBeLessThan(1e-4);
    for (let j = 1; j < glm.columns; j++) expect(Math.abs((model.b[j] as number) - (model.b[0] as number) - (c[glm.rows - 1 + j] as number))).toBeLessThan(1e-4);
    expect(Math.abs((model.beta[0] as number) - (c[c.length - 1] as number))).toBeLessThan(1e-4);
    expect(Math.abs(model.mu + (model.a[0] as number) + (model.b[0] as number) - (c[0] as number))).toBeLessThan(1e-4);
  });
});
