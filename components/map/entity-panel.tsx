'use client';

import type { DrawCloudAnswer, EntityData, NeighbourAnswer } from './types';

interface EntityPanelProps {
  entities: EntityData | undefined;
  focus: number | null;
  fidelity: Float32Array | null;
  neighbours: NeighbourAnswer | undefined;
  neighboursLoading: boolean;
  neighboursError: Error | null;
  cloud: DrawCloudAnswer | undefined;
  hasDraws: boolean;
  settings: { k: number; metric: 'euclidean' | 'cosine' };
  onSettings: (settings: { k: number; metric: 'euclidean' | 'cosine' }) => void;
  onFocus: (index: number) => void;
}

/** The clicked entity: its metadata, its latent neighbours (drawn as lines), partner affinities and draws. */
export function EntityPanel(props: EntityPanelProps) {
  const { entities, focus, neighbours } = props;
  if (!entities || focus === null) {
    return (
      <section className="border border-rule bg-paper-raised p-3 text-sm" aria-labelledby="entity-panel-title">
        <h3 id="entity-panel-title" className="small-caps font-semibold">
          Entity
        </h3>
        <p className="text-ink-muted">Click a point to see its metadata and its nearest neighbours in the full latent space.</p>
      </section>
    );
  }
  const label = entities.labels?.[focus] ?? null;
  return (
    <section className="flex flex-col gap-2 border border-rule bg-paper-raised p-3 text-sm" aria-labelledby="entity-panel-title" data-testid="entity-panel">
      <h3 id="entity-panel-title" className="small-caps font-semibold">
        {label ?? entities.ids[focus]}
      </h3>
      <dl className="tabular grid grid-cols-[auto_1fr] gap-x-3 text-xs">
        <dt className="text-ink-muted">id</dt>
        <dd className="truncate">{entities.ids[focus]}</dd>
        {entities.columns.map((c) => {
          const value = c.type === 'category' ? (c.levels[c.codes[focus] ?? -1] ?? '—') : c.values[focus];
          return [
            <dt key={`${c.name}-t`} className="text-ink-muted">
              {c.name}
            </dt>,
            <dd key={`${c.name}-d`} className="truncate">
              {value === null || value === undefined ? '—' : c.type === 'date' && typeof value === 'number' ? new Date(value).toISOString().slice(0, 10) : String(value)}
            </dd>,
          ];
        })}
        {entities.spread && (
          <>
            <dt className="text-ink-muted">spread</dt>
            <dd>{entities.spread[focus]?.toFixed(3) ?? '—'}</dd>
          </>
        )}
        {props.fidelity && (
          <>
            <dt className="text-ink-muted">fidelity</dt>
            <dd>{props.fidelity[focus]?.toFixed(2)} of 15 latent neighbours kept on the map</dd>
          </>
        )}
      </dl>
      {props.hasDraws && props.cloud && (
        <p className="text-xs text-ink-muted" data-testid="draw-cloud-note">
          {props.cloud.draws} posterior draws shown around the point with a two-SD ellipse
          {props.cloud.placement === 'linear'
            ? ' (projected exactly through the PCA loadings).'
            : props.cloud.placement === 'transform'
              ? " (each placed by UMAP's transform against this fixed layout: where the layout would put such a point, not a re-run)."
              : ' (each placed among its latent neighbours on the map — an approximation, since this method has no transform).'}
        </p>
      )}
      <div className="flex items-end gap-2 text-xs">
        <label className="flex flex-col gap-0.5">
          <span className="text-ink-muted">Neighbours</span>
          <input
            type="number"
            min={1}
            max={100}
            className="w-16 border border-rule bg-paper px-1.5 py-1"
            value={props.settings.k}
            onChange={(e) => props.onSettings({ ...props.settings, k: Math.min(100, Math.max(1, Number(e.target.value) || 1)) })}
          />
        </label>
        <label className="flex flex-col gap-0.5">
          <span className="text-ink-muted">Metric</span>
          <select
            className="border border-rule bg-paper px-1.5 py-1"
            value={props.settings.metric}
            onChange={(e) => props.onSettings({ ...props.settings, metric: e.target.value === 'cosine' ? 'cosine' : 'euclidean' })}
          >
            <option value="euclidean">Euclidean</option>
            <option value="cosine">cosine</option>
          </select>
        </label>
      </div>
      {props.neighboursError && <p className="text-xs text-danger">{props.neighboursError.message}</p>}
      {props.neighboursLoading && <p className="text-xs text-ink-muted">Finding neighbours…</p>}
      {neighbours && (
        <div>
          <p className="text-xs text-ink-muted">Nearest in the latent space (lines on the map). A line that runs far across the map marks a neighbour the projection tore away.</p>
          {neighbours.source === 'approximate graph' && (
            <p className="text-xs text-ink-muted" data-testid="neighbour-source">
              From the approximate neighbour graph of this large set (NN-descent): about 1 in 20 true neighbours may be missing.
            </p>
          )}
          <ol className="tabular mt-1 flex flex-col text-xs" data-testid="neighbour-list">
            {neighbours.items.map((item) => (
              <li key={item.index} className="flex justify-between gap-2">
                <button type="button" className="truncate text-left text-accent hover:underline" onClick={() => props.onFocus(item.index)}>
                  {item.label ?? item.id}
                </button>
                <span className="text-ink-muted">{item.similarity !== null ? `sim ${item.similarity.toFixed(3)}` : `d ${item.distance.toFixed(3)}`}</span>
              </li>
            ))}
          </ol>
        </div>
      )}
      {neighbours?.partner && (
        <div>
          <p className="text-xs text-ink-muted">Highest affinity γ·δ in {neighbours.partner.name}</p>
          <ol className="tabular mt-1 flex flex-col text-xs" data-testid="partner-list">
            {neighbours.partner.items.map((item) => (
              <li key={item.id} className="flex justify-between gap-2">
                <span className="truncate">{item.label ?? item.id}</span>
                <span className="text-ink-muted">{item.affinity.toFixed(3)}</span>
              </li>
            ))}
          </ol>
        </div>
      )}
    </section>
  );
}
