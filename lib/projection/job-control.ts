/**
 * Progress and cancellation plumbing shared by the projection methods (methods.ts, umap.ts,
 * tsne.ts). A projection runs inside a job worker: it reports progress (0–1 and a phase) so the job
 * row can show a live bar, and it stops promptly when the job is cancelled or times out. The layout
 * loops are synchronous arithmetic, so they yield to the event loop between steps; only then can an
 * abort raised by a timer, a database notification or a message reach the AbortSignal.
 */

/**
 * Receives progress: a fraction in [0, 1] that never decreases within one run and ends at exactly
 * 1, and a phase in words for the job row ("neighbour graph", "optimising layout, epoch 120/500").
 */
export interface ProjectionProgress {
  (progress: number, phase: string): void;
}

/**
 * The error every cancelled projection rejects with: name 'AbortError' (what the job worker tests
 * for, as for fetch and the DOM), the signal's reason as `cause` (a timeout, a user's cancel).
 */
export function projectionAbortError(signal: AbortSignal | undefined): Error {
  const error = new Error('projection cancelled', { cause: signal?.reason });
  error.name = 'AbortError';
  return error;
}

/** Throws projectionAbortError when the signal has been aborted. */
export function throwIfCancelled(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw projectionAbortError(signal);
}

/**
 * Runs `work`; if the signal was aborted by the time it fails, the failure becomes
 * projectionAbortError (the lower-level modules throw the signal's raw reason, which may be a
 * DOMException or whatever the caller passed to abort()).
 */
export async function cancellable<T>(signal: AbortSignal | undefined, work: () => Promise<T> | T): Promise<T> {
  try {
    return await work();
  } catch (error) {
    if (signal?.aborted) throw projectionAbortError(signal);
    throw error;
  }
}

/** Lets pending I/O, timers and abort events run (one macrotask turn, a few microseconds). */
export function yieldToEventLoop(): Promise<void> {
  return new Promise<void>((resolve) => setImmediate(resolve));
}

/**
 * Wraps a ProjectionProgress so that the fraction is clamped to [0, 1] and never moves backwards
 * (phases of different cost are mapped onto sub-ranges, and rounding must not make the bar jump
 * back). `finish()` reports exactly 1.
 */
export class ProgressReporter {
  private last = 0;

  constructor(private readonly sink: ProjectionProgress | undefined) {}

  report(progress: number, phase: string): void {
    if (this.sink === undefined) return;
    const clamped = Math.min(1, Math.max(this.last, Number.isFinite(progress) ? progress : this.last));
    this.last = clamped;
    this.sink(clamped, phase);
  }

  /** Reports `start + fraction · (end − start)`: a phase's own 0–1 mapped onto its share of the bar. */
  span(start: number, end: number): (fraction: number, phase: string) => void {
    return (fraction, phase) => this.report(start + Math.min(1, Math.max(0, fraction)) * (end - start), phase);
  }

  finish(phase = 'done'): void {
    if (this.sink === undefined) return;
    this.last = 1;
    this.sink(1, phase);
  }
}
