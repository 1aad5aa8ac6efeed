/**
 * Small SVG plots for the fit page, drawn like printed figures: a faint frame, tick labels in
 * tabular figures, the accent for the fitted or replicated series and ink for the observed one.
 */
import type { Nullable, WireCalibration, WirePosteriorPredictive } from '@/lib/fits/summary';

const W = 420;
const H = 220;
const M = { left: 52, right: 12, top: 12, bottom: 34 };
const IW = W - M.left - M.right;
const IH = H - M.top - M.bottom;

function format(value: number): string {
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 10_000 || abs < 0.01) return value.toExponential(1);
  if (abs >= 100) return value.toFixed(0);
  return value.toPrecision(3);
}

function ticks(min: number, max: number, count = 4): number[] {
  if (!(max > min)) return [min];
  return Array.from({ length: count + 1 }, (_, i) => min + ((max - min) * i) / count);
}

function Frame({ xMin, xMax, yMin, yMax, xLabel, yLabel, children, title }: { xMin: number; xMax: number; yMin: number; yMax: number; xLabel: string; yLabel: string; children: React.ReactNode; title: string }) {
  const x = (v: number) => M.left + ((v - xMin) / (xMax - xMin || 1)) * IW;
  const y = (v: number) => M.top + IH - ((v - yMin) / (yMax - yMin || 1)) * IH;
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="tabular h-auto w-full max-w-[520px] text-ink" role="img" aria-label={title}>
      <title>{title}</title>
      <rect x={M.left} y={M.top} width={IW} height={IH} fill="none" stroke="var(--rule)" />
      {ticks(yMin, yMax).map((t) => (
        <g key={`y${t}`}>
          <line x1={M.left} x2={M.left + IW} y1={y(t)} y2={y(t)} stroke="var(--rule)" strokeDasharray="2 3" />
          <text x={M.left - 6} y={y(t) + 3} textAnchor="end" fontSize="10" fill="var(--ink-muted)">
            {format(t)}
          </text>
        </g>
      ))}
      {ticks(xMin, xMax).map((t) => (
        <text key={`x${t}`} x={x(t)} y={M.top + IH + 14} textAnchor="middle" fontSize="10" fill="var(--ink-muted)">
          {format(t)}
        </text>
      ))}
      <text x={M.left + IW / 2} y={H - 4} textAnchor="middle" fontSize="11" fill="var(--ink-muted)">
        {xLabel}
      </text>
      <text x={12} y={M.top + IH / 2} textAnchor="middle" fontSize="11" fill="var(--ink-muted)" transform={`rotate(-90 12 ${M.top + IH / 2})`}>
        {yLabel}
      </text>
      {children}
    </svg>
  );
}

function scales(xMin: number, xMax: number, yMin: number, yMax: number) {
  return {
    x: (v: number) => M.left + ((v - xMin) / (xMax - xMin || 1)) * IW,
    y: (v: number) => M.top + IH - ((v - yMin) / (yMax - yMin || 1)) * IH,
  };
}

/** The objective per iteration (negative log posterior per observation, constants dropped). */
export function ObjectivePlot({ history, label }: { history: Nullable[]; label: string }) {
  const points = history.map((v, i) => [i + 1, v] as const).filter((p): p is readonly [number, number] => p[1] !== null);
  if (points.length < 2) return <p className="text-sm text-ink-muted">Too few iterations to plot.</p>;
  const ys = points.map((p) => p[1]);
  const yMin = Math.min(...ys);
  const yMax = Math.max(...ys);
  const xMax = points[points.length - 1]?.[0] ?? 1;
  const s = scales(1, xMax, yMin, yMax);
  const path = points.map(([x, y], i) => `${i === 0 ? 'M' : 'L'}${s.x(x).toFixed(1)},${s.y(y).toFixed(1)}`).join('');
  return (
    <Frame xMin={1} xMax={xMax} yMin={yMin} yMax={yMax} xLabel="iteration" yLabel={label} title={`${label} per iteration`}>
      <path d={path} fill="none" stroke="var(--accent)" strokeWidth="1.5" />
    </Frame>
  );
}

/** Observed outcome counts per bin (ink bars) against the replicated data sets (accent: mean, with the 5–95% band as a whisker). */
export function PosteriorPredictivePlot({ ppc, outcome }: { ppc: WirePosteriorPredictive; outcome: string }) {
  const h = ppc.histogram;
  const bins = h.observed.length;
  if (bins === 0) return null;
  const lows = h.lower.map((v) => v ?? 0);
  const xMin = lows[0] ?? 0;
  const lastUpper = h.upper[bins - 1] ?? (lows[bins - 1] ?? 0) + 1;
  const xMax = lastUpper;
  const yMax = Math.max(1, ...h.observed, ...h.replicatedHigh.map((v) => v ?? 0));
  const s = scales(xMin, xMax, 0, yMax);
  return (
    <Frame xMin={xMin} xMax={xMax} yMin={0} yMax={yMax} xLabel={`${outcome}${h.lastOpen ? ' (last bin: this and above)' : ''}`} yLabel="observations" title="Observed and replicated outcome distribution">
      {h.observed.map((count, b) => {
        const x0 = s.x(lows[b] ?? 0);
        const x1 = s.x(h.upper[b] ?? lastUpper);
        const mean = h.replicatedMean[b];
        const low = h.replicatedLow[b];
        const high = h.replicatedHigh[b];
        const mid = (x0 + x1) / 2;
        return (
          <g key={b}>
            <rect x={x0 + 0.5} width={Math.max(0.5, x1 - x0 - 1)} y={s.y(count)} height={s.y(0) - s.y(count)} fill="var(--ink-faint)" opacity="0.55" />
            {low !== null && low !== undefined && high !== null && high !== undefined && <line x1={mid} x2={mid} y1={s.y(low)} y2={s.y(high)} stroke="var(--accent)" strokeWidth="1.2" />}
            {mean !== null && mean !== undefined && <circle cx={mid} cy={s.y(mean)} r="2" fill="var(--accent)" />}
          </g>
        );
      })}
    </Frame>
  );
}

/** Reliability diagram: mean predicted probability against the observed share of 1s per bin; the diagonal is perfect calibration. */
export function CalibrationPlot({ calibration }: { calibration: WireCalibration }) {
  const s = scales(0, 1, 0, 1);
  const points = calibration.bins.filter((b) => b.count > 0 && b.meanPredicted !== null && b.observedRate !== null);
  return (
    <Frame xMin={0} xMax={1} yMin={0} yMax={1} xLabel={`predicted probability (${calibration.source})`} yLabel="observed share of 1s" title="Calibration">
      <line x1={s.x(0)} y1={s.y(0)} x2={s.x(1)} y2={s.y(1)} stroke="var(--ink-faint)" strokeDasharray="4 3" />
      <path
        d={points.map((b, i) => `${i === 0 ? 'M' : 'L'}${s.x(b.meanPredicted ?? 0).toFixed(1)},${s.y(b.observedRate ?? 0).toFixed(1)}`).join('')}
        fill="none"
        stroke="var(--accent)"
        strokeWidth="1.5"
      />
      {points.map((b) => (
        <circle key={b.lower} cx={s.x(b.meanPredicted ?? 0)} cy={s.y(b.observedRate ?? 0)} r={Math.min(6, 2 + Math.log10(b.count + 1))} fill="var(--accent)">
          <title>{`${b.count} observations: predicted ${(b.meanPredicted ?? 0).toFixed(3)}, observed ${(b.observedRate ?? 0).toFixed(3)}`}</title>
        </circle>
      ))}
    </Frame>
  );
}

/** Predicted probability split by observed outcome, each histogram as a share of its own group. */
export function ByOutcomePlot({ byOutcome, source }: { byOutcome: WireCalibration['byOutcome']; source: string }) {
  const total = (values: number[]) => Math.max(1, values.reduce((a, b) => a + b, 0));
  const zeros = byOutcome.zeros.map((v) => v / total(byOutcome.zeros));
  const ones = byOutcome.ones.map((v) => v / total(byOutcome.ones));
  const yMax = Math.max(0.01, ...zeros, ...ones);
  const s = scales(0, 1, 0, yMax);
  const line = (values: number[]) =>
    values
      .map((v, b) => {
        const x0 = s.x(byOutcome.lower[b] ?? 0);
        const x1 = s.x(byOutcome.upper[b] ?? 1);
        return `${b === 0 ? 'M' : 'L'}${x0.toFixed(1)},${s.y(v).toFixed(1)}L${x1.toFixed(1)},${s.y(v).toFixed(1)}`;
      })
      .join('');
  return (
    <figure className="flex flex-col gap-1">
      <Frame xMin={0} xMax={1} yMin={0} yMax={yMax} xLabel={`predicted probability (${source})`} yLabel="share of the group" title="Predicted probability by observed outcome">
        <path d={line(zeros)} fill="none" stroke="var(--ink-muted)" strokeWidth="1.5" strokeDasharray="4 2" />
        <path d={line(ones)} fill="none" stroke="var(--accent)" strokeWidth="1.5" />
      </Frame>
      <figcaption className="text-xs text-ink-muted">
        <span className="text-accent">solid: observed 1</span> · dashed: observed 0. The further apart, the better the fit tells them apart.
      </figcaption>
    </figure>
  );
}

/** ARD prior scale τ_k per latent dimension: dimensions shrunk near 0 are not supported by the data. */
export function ArdScales({ scales: values }: { scales: Nullable[] }) {
  const max = Math.max(1e-9, ...values.map((v) => v ?? 0));
  return (
    <ol className="tabular flex flex-col gap-1 text-sm">
      {values.map((v, k) => (
        <li key={k} className="grid grid-cols-[5rem_1fr_4rem] items-center gap-2">
          <span className="text-ink-muted">dimension {k + 1}</span>
          <span className="h-2 bg-paper-sunk">
            <span className="block h-2 bg-accent" style={{ width: `${(((v ?? 0) / max) * 100).toFixed(1)}%` }} />
          </span>
          <span className="text-right">{v === null ? '—' : v.toPrecision(3)}</span>
        </li>
      ))}
    </ol>
  );
}
