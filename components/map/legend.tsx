import type { Legend } from './colouring';
import type { MapProjectionInfo } from './types';

/** What distances mean on each method's map: the scale note every map carries. */
export const SCALE_NOTES: Record<MapProjectionInfo['method'], string> = {
  pca: 'PCA: distances along the two axes are latent distances projected linearly; what the two components miss is not shown.',
  umap: 'UMAP: only local neighbourhoods are kept. Distances between far-apart groups, and the sizes of groups, are not meaningful.',
  sammon: 'Sammon mapping: small distances are kept most faithfully; large distances are bent to keep them.',
  tsne: 't-SNE: only local neighbourhoods are kept. Distances between groups and the sizes of groups are not meaningful.',
};

const fmt = (v: number | null | undefined, digits = 3) => (v === null || v === undefined || Number.isNaN(v) ? '—' : v.toFixed(digits));

/** The projection's fidelity scores as one compact line. */
export function ProjectionScores({ projection }: { projection: MapProjectionInfo }) {
  const q = projection.quality;
  if (!q) return <span className="text-ink-muted">no scores stored</span>;
  return (
    <span className="tabular text-ink-muted" data-testid="projection-scores" title="Trustworthiness and continuity at k = 15 (1 is perfect), share of 15 nearest neighbours kept, Spearman correlation of latent and map distances, normalised stress">
      T₁₅ {fmt(q.trustworthiness['15'])} · C₁₅ {fmt(q.continuity['15'])} · kNN {fmt(q.knnPreservation)} · ρ {fmt(q.shepardRho)} · stress {fmt(q.stress)}
      {q.sampledQueries ? ` · estimated from ${q.sampledQueries} sampled entities` : ''}
      {q.explainedVariance ? ` · variance ${q.explainedVariance.map((v) => `${(v * 100).toFixed(1)}%`).join(' + ')}` : ''}
    </span>
  );
}

/** The corner legend: colours, and the scale note that says what distances mean. */
export function MapLegend({ legend, method }: { legend: Legend; method: MapProjectionInfo['method'] }) {
  return (
    <div className="pointer-events-none absolute bottom-2 left-2 flex max-w-[18rem] flex-col gap-1.5 text-[11px]">
      {legend.kind === 'categorical' && (
        <div className="pointer-events-auto border border-rule bg-paper-raised/95 p-2" data-testid="map-legend">
          <p className="small-caps mb-1 font-semibold">{legend.title}</p>
          <ul className="flex flex-col gap-0.5">
            {legend.items.map((item) => (
              <li key={item.label} className="flex items-center gap-1.5">
                <span className="inline-block h-2.5 w-2.5 rounded-full" style={{ background: item.color }} aria-hidden="true" />
                <span className="truncate">{item.label}</span>
                <span className="tabular ml-auto text-ink-muted">{item.count.toLocaleString('en-GB')}</span>
              </li>
            ))}
          </ul>
          {legend.more > 0 && <p className="text-ink-muted">and {legend.more} more in one grey</p>}
        </div>
      )}
      {legend.kind === 'continuous' && (
        <div className="pointer-events-auto border border-rule bg-paper-raised/95 p-2" data-testid="map-legend">
          <p className="small-caps mb-1 font-semibold">{legend.title}</p>
          <div className="h-2 w-48" style={{ background: `linear-gradient(to right, ${legend.stops.join(', ')})` }} aria-hidden="true" />
          <div className="tabular flex w-48 justify-between text-ink-muted">
            {legend.ticks.map((t) => (
              <span key={t}>{legend.note === 'dates' ? new Date(t).toISOString().slice(0, 10) : Number(t.toPrecision(3))}</span>
            ))}
          </div>
        </div>
      )}
      <p className="pointer-events-auto border border-rule bg-paper-raised/95 p-1.5 text-ink-muted" data-testid="scale-note">
        {SCALE_NOTES[method]} Clusters drawn by eye can be artefacts; proposals are computed in the full latent space.
      </p>
    </div>
  );
}
