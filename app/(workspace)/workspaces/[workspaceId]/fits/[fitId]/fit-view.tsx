'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { useEffect, useRef, useState } from 'react';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import { FormMessage } from '@/components/ui/field';
import type { Fit } from '@/lib/fits/fits';
import type { Nullable, WireInterval, WireMetrics } from '@/lib/fits/summary';
import { ArdScales, ByOutcomePlot, CalibrationPlot, ObjectivePlot, PosteriorPredictivePlot } from './fit-plots';

export type WireFit = Omit<Fit, 'createdAt' | 'startedAt' | 'finishedAt'> & { createdAt: string; startedAt: string | null; finishedAt: string | null };

const live = (status: WireFit['status']) => status === 'queued' || status === 'running';

const num = (value: Nullable | undefined, digits = 4) => (value === null || value === undefined ? '—' : value.toPrecision(digits));

const LIKELIHOOD_LABEL = { gaussian: 'Gaussian (identity link)', bernoulli: 'Bernoulli (logit link)', poisson: 'Poisson (log link)' } as const;

export function FitView({ initial, workspaceId, mayManage, factorSetNames }: { initial: WireFit; workspaceId: string; mayManage: boolean; factorSetNames: Record<string, string> }) {
  const queryClient = useQueryClient();
  const router = useRouter();
  const [problem, setProblem] = useState<string | null>(null);
  const key = ['fits', initial.id];
  const query = useQuery({
    queryKey: key,
    queryFn: () => jsonFetch<WireFit>(`/api/fits/${initial.id}`),
    initialData: initial,
    refetchInterval: (q) => (q.state.data && live(q.state.data.status) ? 1000 : false),
  });
  const fit = query.data;
  const cancel = useMutation({
    mutationFn: () => jsonFetch<WireFit>(`/api/fits/${fit.id}/cancel`, { method: 'POST' }),
    onMutate: () => setProblem(null),
    onError: (error) => setProblem(error.message),
    onSettled: () => queryClient.invalidateQueries({ queryKey: key }),
  });
  const remove = useMutation({
    mutationFn: () => jsonFetch(`/api/fits/${fit.id}`, { method: 'DELETE' }),
    onError: (error) => setProblem(error.message),
    onSuccess: () => {
      router.push(`/workspaces/${workspaceId}/fits`);
      router.refresh();
    },
  });
  // The factor sets appear when the fit finishes; refresh the server part once for their names.
  const refreshed = useRef(false);
  const missingNames = fit.status === 'done' && fit.rowFactorSetId !== null && !factorSetNames[fit.rowFactorSetId];
  useEffect(() => {
    if (!missingNames || refreshed.current) return;
    refreshed.current = true;
    router.refresh();
  }, [missingNames, router]);
  const s = fit.settings;

  return (
    <div className="flex flex-col gap-6" data-testid="fit-view">
      {problem && <FormMessage kind="error">{problem}</FormMessage>}
      <StatusBlock fit={fit} mayManage={mayManage} onCancel={() => cancel.mutate()} cancelling={cancel.isPending} />

      <section aria-labelledby="settings-heading" className="flex flex-col gap-2">
        <h3 id="settings-heading" className="small-caps text-xs font-semibold text-ink-muted">
          Settings
        </h3>
        <dl className="tabular grid grid-cols-2 gap-x-6 gap-y-2 border border-rule bg-paper-raised p-4 text-sm md:grid-cols-4">
          <Item label="Table">{`${fit.sourceName} · ${fit.observations.toLocaleString('en-GB')} observations`}</Item>
          <Item label="Row entities">{`${s.rowColumn} (${fit.rowEntities.toLocaleString('en-GB')})`}</Item>
          <Item label="Column entities">{`${s.columnColumn} (${fit.columnEntities.toLocaleString('en-GB')})`}</Item>
          <Item label="Outcome">{`${s.outcome}, ${LIKELIHOOD_LABEL[s.likelihood]}`}</Item>
          <Item label="Covariates">{s.covariates.length ? s.covariates.map((c) => (typeof c === 'string' ? c : `${c.column} (${c.type})`)).join(', ') : 'none'}</Item>
          <Item label="Offset">{s.offset ? `${s.offset} (${s.offsetScale === 'exposure' ? 'exposure, log taken' : 'log scale'})` : 'none'}</Item>
          <Item label="Rank K">{String(s.rank)}</Item>
          <Item label="Method">{s.method === 'variational' ? `variational (${s.draws} draws)` : 'MAP (posterior mode)'}</Item>
          <Item label="Factor prior">{s.hierarchical ? 'hierarchical (ARD scale per dimension)' : 'Normal(0, 1) per element'}</Item>
          <Item label="Main-effect prior σ">{String(s.priorScale)}</Item>
          <Item label="Cross-validation">{s.folds === 0 ? 'none' : `${s.folds} folds`}</Item>
          <Item label="Seed">{String(s.seed)}</Item>
          <div className="col-span-2 md:col-span-4">
            <dt className="text-ink-muted">SHA-256 of the table</dt>
            <dd className="truncate font-mono text-xs">{fit.checksumSha256}</dd>
          </div>
        </dl>
      </section>

      {fit.warnings.length > 0 && (
        <div className="border border-caution/50 bg-caution-wash p-3 text-sm" data-testid="fit-warnings">
          <p className="font-semibold">Warnings</p>
          <ul className="list-inside list-disc">
            {fit.warnings.map((w, i) => (
              <li key={i}>{w}</li>
            ))}
          </ul>
        </div>
      )}

      {fit.status === 'done' && (
        <>
          <FactorSetLinks fit={fit} workspaceId={workspaceId} names={factorSetNames} />
          {fit.metrics && <ComparisonTable fit={fit} />}
          {fit.convergence && (
            <section aria-labelledby="convergence-heading" className="flex flex-col gap-2">
              <h3 id="convergence-heading" className="text-lg font-semibold">
                Convergence
              </h3>
              <p className="tabular text-sm text-ink-muted">
                Factorization machine on all the data: {fit.convergence.iterations} iterations, {fit.convergence.evaluations} evaluations, final objective {num(fit.convergence.objective, 6)}, largest gradient component{' '}
                {num(fit.convergence.gradientNorm, 3)}; {fit.convergence.converged ? `converged (${fit.convergence.reason})` : `did not converge (${fit.convergence.reason})`}.
              </p>
              <div className="grid gap-4 md:grid-cols-2">
                <figure className="border border-rule bg-paper-raised p-3">
                  <ObjectivePlot history={fit.convergence.history} label="objective" />
                  <figcaption className="text-xs text-ink-muted">Negative log posterior per observation (constants dropped), per L-BFGS iteration.</figcaption>
                </figure>
                {fit.convergence.variational && (
                  <figure className="border border-rule bg-paper-raised p-3">
                    <ObjectivePlot history={fit.convergence.variational.history} label="−ELBO per observation" />
                    <figcaption className="text-xs text-ink-muted">Variational objective per iteration ({fit.convergence.variational.iterations} iterations; noisy by construction).</figcaption>
                  </figure>
                )}
              </div>
            </section>
          )}
          {fit.summary && (
            <>
              <section aria-labelledby="ppc-heading" className="flex flex-col gap-2">
                <h3 id="ppc-heading" className="text-lg font-semibold">
                  Posterior-predictive check
                </h3>
                <p className="max-w-prose text-sm text-ink-muted">
                  Grey bars: the observed distribution of {s.outcome}. Dots and whiskers: the mean and 5–95% range over {fit.summary.ppc.replicates} data sets replicated from the fitted model
                  {fit.summary.ppc.source === 'plug-in' ? ' at its fitted values (a plug-in check: parameter uncertainty is ignored)' : ', each with its own parameter draw'}. Bars far outside the whiskers show where the
                  model misfits.
                </p>
                <div className="grid gap-4 md:grid-cols-2">
                  <figure className="border border-rule bg-paper-raised p-3">
                    <PosteriorPredictivePlot ppc={fit.summary.ppc} outcome={s.outcome} />
                  </figure>
                  <table className="tabular h-fit border border-rule bg-paper-raised text-left text-sm">
                    <thead className="border-b border-rule text-xs text-ink-muted">
                      <tr>
                        <th scope="col" className="px-3 py-2 font-medium">Statistic</th>
                        <th scope="col" className="px-3 py-2 text-right font-medium">Observed</th>
                        <th scope="col" className="px-3 py-2 text-right font-medium">Replicated (mean)</th>
                        <th scope="col" className="px-3 py-2 text-right font-medium" title="Share of replicates at or above the observed value; near 0 or 1 flags misfit">p</th>
                      </tr>
                    </thead>
                    <tbody>
                      {fit.summary.ppc.statistics.map((stat) => {
                        const reps = stat.replicated.filter((v): v is number => v !== null);
                        return (
                          <tr key={stat.name} className="border-b border-rule last:border-0">
                            <td className="px-3 py-1.5">{stat.name}</td>
                            <td className="px-3 py-1.5 text-right">{num(stat.observed)}</td>
                            <td className="px-3 py-1.5 text-right">{reps.length ? num(reps.reduce((a, b) => a + b, 0) / reps.length) : '—'}</td>
                            <td className="px-3 py-1.5 text-right">{num(stat.pValue, 2)}</td>
                          </tr>
                        );
                      })}
                    </tbody>
                  </table>
                </div>
              </section>
              {fit.summary.calibration && (
                <section aria-labelledby="calibration-heading" className="flex flex-col gap-2">
                  <h3 id="calibration-heading" className="text-lg font-semibold">
                    Calibration
                  </h3>
                  <p className="max-w-prose text-sm text-ink-muted">
                    {fit.summary.calibration.source === 'held-out'
                      ? 'From the held-out predictions of cross-validation: every observation predicted by a fit that did not see it.'
                      : 'In sample (the fit ran without cross-validation), so this flatters the model.'}
                  </p>
                  <div className="grid gap-4 md:grid-cols-2">
                    <figure className="border border-rule bg-paper-raised p-3">
                      <CalibrationPlot calibration={fit.summary.calibration} />
                    </figure>
                    <div className="border border-rule bg-paper-raised p-3">
                      <ByOutcomePlot byOutcome={fit.summary.calibration.byOutcome} source={fit.summary.calibration.source} />
                    </div>
                  </div>
                </section>
              )}
              {fit.summary.ardScales && (
                <section aria-labelledby="ard-heading" className="flex flex-col gap-2">
                  <h3 id="ard-heading" className="text-lg font-semibold">
                    Scale of each latent dimension (ARD)
                  </h3>
                  <p className="max-w-prose text-sm text-ink-muted">
                    The learned prior scale τ of each dimension. Dimensions the data do not support shrink towards zero; count the ones that stay clearly above it to see how many the data support.
                  </p>
                  <div className="max-w-xl border border-rule bg-paper-raised p-4">
                    <ArdScales scales={fit.summary.ardScales} />
                  </div>
                </section>
              )}
              <ColdStart fit={fit} />
              <MainEffects fit={fit} />
            </>
          )}
        </>
      )}
      {mayManage && !live(fit.status) && (
        <div>
          <Button variant="danger" onClick={() => remove.mutate()} disabled={remove.isPending}>
            Delete this fit record
          </Button>
          <p className="mt-1 text-xs text-ink-muted">The factor sets it created stay in the workspace.</p>
        </div>
      )}
    </div>
  );
}

function Item({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div>
      <dt className="text-ink-muted">{label}</dt>
      <dd>{children}</dd>
    </div>
  );
}

function StatusBlock({ fit, mayManage, onCancel, cancelling }: { fit: WireFit; mayManage: boolean; onCancel: () => void; cancelling: boolean }) {
  if (live(fit.status)) {
    return (
      <section aria-live="polite" className="flex flex-col gap-2 border border-rule bg-paper-raised p-4" data-testid="fit-progress">
        <div className="flex items-center justify-between gap-3">
          <p className="small-caps text-xs font-semibold text-ink-muted">{fit.status}</p>
          {mayManage && (
            <Button variant="secondary" onClick={onCancel} disabled={cancelling}>
              Cancel the fit
            </Button>
          )}
        </div>
        <progress className="h-2 w-full accent-[var(--accent)]" max={1} value={fit.progress} aria-label="Progress of the fit" />
        <p className="tabular text-sm text-ink-muted" data-testid="fit-phase">
          {fit.phase ?? fit.status}
        </p>
      </section>
    );
  }
  if (fit.status === 'failed') {
    return (
      <p role="alert" className="border border-danger/50 bg-danger-wash p-4 text-sm text-danger">
        The fit failed: {fit.error}
      </p>
    );
  }
  if (fit.status === 'cancelled') return <p className="border border-rule bg-paper-sunk p-4 text-sm">The fit was cancelled; nothing of it was stored.</p>;
  return (
    <p className="tabular text-sm text-ink-muted" data-testid="fit-status">
      Done{fit.durationMs !== null ? ` in ${(fit.durationMs / 1000).toFixed(1)} s` : ''}.
    </p>
  );
}

function FactorSetLinks({ fit, workspaceId, names }: { fit: WireFit; workspaceId: string; names: Record<string, string> }) {
  const entries = [
    { id: fit.rowFactorSetId, what: `Row-entity factors γ (${fit.settings.rowColumn})` },
    { id: fit.columnFactorSetId, what: `Column-entity factors δ (${fit.settings.columnColumn})` },
  ];
  return (
    <section aria-labelledby="factor-sets-heading" className="flex flex-col gap-2">
      <h3 id="factor-sets-heading" className="text-lg font-semibold">
        Fitted factor sets
      </h3>
      <ul className="flex flex-col gap-1 text-sm">
        {entries.map((e) => (
          <li key={e.what}>
            {e.what}:{' '}
            {e.id ? (
              <Link className="text-accent hover:underline" href={`/workspaces/${workspaceId}/factor-sets/${e.id}`}>
                {names[e.id] ?? 'open the factor set'}
              </Link>
            ) : (
              <span className="text-ink-muted">deleted</span>
            )}
          </li>
        ))}
      </ul>
      <p className="max-w-prose text-xs text-ink-muted">
        The two sets are joint partners: only the products γ_i·δ_j are identified, so rotate them together or not at all. A PCA projection of each is queued when the fit finishes.
      </p>
      {fit.settings.method === 'variational' && (
        <p className="max-w-prose border border-caution/50 bg-caution-wash p-3 text-sm" data-testid="variational-note">
          The draws of these factor sets come from mean-field variational inference: an approximation to the posterior that tends to understate its spread and ignores correlations between
          parameters. Read the uncertainty clouds and intervals as a lower bound, not as exact posterior intervals.
        </p>
      )}
    </section>
  );
}

const METRIC_COLUMNS: Record<WireFit['settings']['likelihood'], { key: keyof WireMetrics; label: string; better: string }[]> = {
  gaussian: [{ key: 'rmse', label: 'RMSE', better: 'lower is better' }],
  bernoulli: [
    { key: 'logLoss', label: 'Log loss', better: 'lower is better' },
    { key: 'auc', label: 'AUC', better: 'higher is better' },
  ],
  poisson: [{ key: 'deviance', label: 'Mean deviance', better: 'lower is better' }],
};

function ComparisonTable({ fit }: { fit: WireFit }) {
  const metrics = fit.metrics;
  if (!metrics) return null;
  const columns = METRIC_COLUMNS[fit.settings.likelihood];
  const rows = [
    { label: `Factorization machine (rank ${fit.settings.rank})`, m: metrics.fm },
    { label: 'Main effects only', m: metrics.mainEffects },
    { label: 'Intercept only', m: metrics.intercept },
  ];
  return (
    <section aria-labelledby="comparison-heading" className="flex flex-col gap-2">
      <h3 id="comparison-heading" className="text-lg font-semibold">
        Held-out comparison
      </h3>
      <p className="max-w-prose text-sm text-ink-muted">
        In-sample fit flatters; the held-out columns (pooled out-of-fold predictions of {fit.settings.folds}-fold cross-validation) are the honest comparison. The interaction term earns its keep only if the
        factorization machine beats the main-effects model held out.
      </p>
      <div className="overflow-x-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm" data-testid="comparison-table">
          <thead className="border-b border-rule text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">Model</th>
              {columns.map((c) => (
                <th key={`in-${c.key}`} scope="col" className="px-3 py-2 text-right font-medium" title={c.better}>
                  {c.label}, in sample
                </th>
              ))}
              {columns.map((c) => (
                <th key={`out-${c.key}`} scope="col" className="px-3 py-2 text-right font-medium" title={c.better}>
                  {c.label}, held out
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.label} className="border-b border-rule last:border-0">
                <th scope="row" className="px-3 py-2 font-normal">
                  {r.label}
                </th>
                {columns.map((c) => (
                  <td key={`in-${c.key}`} className="px-3 py-2 text-right">
                    {num(r.m.inSample[c.key])}
                  </td>
                ))}
                {columns.map((c) => (
                  <td key={`out-${c.key}`} className="px-3 py-2 text-right">
                    {r.m.heldOut ? num(r.m.heldOut[c.key]) : '—'}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}

function ColdStart({ fit }: { fit: WireFit }) {
  const cold = fit.summary?.coldStart;
  if (!cold || cold.rowCount + cold.columnCount === 0) return null;
  const list = (items: { id: string; count: number }[], total: number) => (
    <span>
      {items.map((e) => `${e.id} (${e.count})`).join(', ')}
      {total > items.length ? ` and ${total - items.length} more` : ''}
    </span>
  );
  return (
    <section aria-labelledby="cold-heading" className="flex flex-col gap-2 border border-caution/50 bg-caution-wash p-4 text-sm" data-testid="cold-start">
      <h3 id="cold-heading" className="font-semibold">
        Cold start
      </h3>
      <p>
        Entities with fewer than {cold.threshold} observations have factors that are mostly the prior (near 0): do not read their position on a map as a finding.
      </p>
      {cold.rowCount > 0 && (
        <p>
          {fit.settings.rowColumn}: {list(cold.rows, cold.rowCount)}
        </p>
      )}
      {cold.columnCount > 0 && (
        <p>
          {fit.settings.columnColumn}: {list(cold.columns, cold.columnCount)}
        </p>
      )}
    </section>
  );
}

function MainEffects({ fit }: { fit: WireFit }) {
  const effects = fit.summary?.mainEffects;
  const [side, setSide] = useState<'rows' | 'columns'>('columns');
  if (!effects) return null;
  const withIntervals = effects.source === 'variational';
  const cells = (e: WireInterval) => (
    <>
      <td className="px-3 py-1.5 text-right">{num(e.mean)}</td>
      {withIntervals && (
        <>
          <td className="px-3 py-1.5 text-right">{num(e.sd, 3)}</td>
          <td className="px-3 py-1.5 text-right">
            {num(e.lower)} to {num(e.upper)}
          </td>
        </>
      )}
    </>
  );
  const entities = side === 'rows' ? effects.rows : effects.columns;
  const total = side === 'rows' ? effects.rowCount : effects.columnCount;
  return (
    <section aria-labelledby="effects-heading" className="flex flex-col gap-2">
      <h3 id="effects-heading" className="text-lg font-semibold">
        Main effects
      </h3>
      <p className="max-w-prose text-sm text-ink-muted">
        On the linear-predictor scale ({fit.settings.likelihood === 'gaussian' ? 'the outcome itself' : fit.settings.likelihood === 'bernoulli' ? 'log odds' : 'log rate'}).{' '}
        {withIntervals
          ? 'Means and 95% intervals of the variational approximation, which tends to be too narrow.'
          : 'Posterior-mode point estimates; fit with the variational method for intervals.'}
      </p>
      <div className="overflow-x-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm" data-testid="main-effects-table">
          <thead className="border-b border-rule text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">Term</th>
              <th scope="col" className="px-3 py-2 text-right font-medium">Estimate</th>
              {withIntervals && (
                <>
                  <th scope="col" className="px-3 py-2 text-right font-medium">SD</th>
                  <th scope="col" className="px-3 py-2 text-right font-medium">95% interval</th>
                </>
              )}
            </tr>
          </thead>
          <tbody>
            <tr className="border-b border-rule">
              <th scope="row" className="px-3 py-1.5 font-normal">intercept μ</th>
              {cells(effects.intercept)}
            </tr>
            {effects.covariates.map((c) => (
              <tr key={c.name} className="border-b border-rule">
                <th scope="row" className="px-3 py-1.5 font-normal">
                  {c.name}
                </th>
                {cells(c)}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="flex gap-3 text-sm" role="group" aria-label="Entity main effects">
        <Button variant={side === 'columns' ? 'primary' : 'secondary'} onClick={() => setSide('columns')}>
          {fit.settings.columnColumn} effects b
        </Button>
        <Button variant={side === 'rows' ? 'primary' : 'secondary'} onClick={() => setSide('rows')}>
          {fit.settings.rowColumn} effects a
        </Button>
      </div>
      <div className="max-h-96 overflow-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm">
          <thead className="sticky top-0 border-b border-rule bg-paper-raised text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">{side === 'rows' ? fit.settings.rowColumn : fit.settings.columnColumn}</th>
              <th scope="col" className="px-3 py-2 text-right font-medium">Estimate</th>
              {withIntervals && (
                <>
                  <th scope="col" className="px-3 py-2 text-right font-medium">SD</th>
                  <th scope="col" className="px-3 py-2 text-right font-medium">95% interval</th>
                </>
              )}
            </tr>
          </thead>
          <tbody>
            {entities.map((e) => (
              <tr key={e.id} className="border-b border-rule last:border-0">
                <th scope="row" className="px-3 py-1.5 font-normal">
                  {e.id}
                </th>
                {cells(e)}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {total > entities.length && <p className="text-xs text-ink-muted">Showing the first {entities.length} of {total}; every entity&apos;s effect is in its factor set&apos;s metadata (main_effect).</p>}
    </section>
  );
}
