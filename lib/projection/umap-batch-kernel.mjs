// @ts-check
/**
 * One epoch of the batch UMAP layout (umap-batch.ts) over a range of vertices, in plain
 * JavaScript so that the main thread and the worker threads (umap-batch-worker.mjs) run the very
 * same code (why .mjs: see knn-kernel.mjs). Types in umap-batch-kernel.d.mts.
 *
 * Why a batch layout exists beside the in-place one (umap-kernel.ts UmapLayout, umap-js's
 * algorithm): issue 4 asks for UMAP at 10,000 and 50,000 points in no more time than uwot with two
 * threads, and for identical coordinates from the same input, settings and seed. The in-place
 * stochastic descent moves points while later updates read them, so it is sequential by nature;
 * splitting it across threads Hogwild-style (as uwot and umap-learn do) makes the result depend on
 * thread timing. Here every epoch reads the positions the previous epoch left (`read`) and writes
 * new ones (`write`), every vertex is moved only by its own edges, and its negative samples come
 * from a stream keyed by (seed, epoch, vertex): each vertex's update is a function of the previous
 * epoch alone, so any split of the vertices over any number of threads gives the same bits.
 * uwot's batch mode makes the same trade (from memory of uwot's documentation: updates applied at
 * the end of each epoch, reproducible with several threads, Adam as the optimiser by default).
 *
 * Per vertex i and epoch (e = the epoch, 0-based; α = 1 − e/nEpochs, as the in-place layout):
 *   - for each edge i → j of the fuzzy graph that is due (the same epochs-per-sample bookkeeping
 *     as umap-js): an attraction 2 · clip(∂/∂y_i of the curve's log-membership). The factor 2: in
 *     the in-place algorithm both ends of an edge move and each edge is listed in both directions,
 *     so a vertex gets two pulls per sampled pair; moving only i keeps that balance of attraction
 *     to repulsion;
 *   - the edge's due negative samples (NEGATIVE_SAMPLE_RATE per sample) push i away from points
 *     drawn uniformly from its own stream (umap-js's repulsion formula and clipping);
 *   - the summed gradient g moves i by Adam (Kingma & Ba, 2015) with β₁ = ADAM_BETA1,
 *     β₂ = ADAM_BETA2, ε = ADAM_EPSILON and step size α: y ← y + α · m̂ / (√v̂ + ε). Plain SGD with
 *     the summed gradient was measured too (10,000 × 32 mixture: T(15) 0.9794 against Adam's
 *     0.9812 and the in-place layout's 0.9804): Adam's per-coordinate scaling tames the first
 *     epochs, where a vertex's summed pulls are large.
 *   - every power d^b (one per attraction and per negative sample) by fastPower below, not by
 *     Math.exp(b · Math.log(d)): 10,000 × 32 layout 5.1 s → 4.6 s on two threads, T(15) 0.9812 →
 *     0.9810; 5,000 × 32 on one thread 4.7 s → 4.0 s (.explore measurements, idle machine).
 */
import { fmix32 } from './hash-kernel.mjs';

/** Adam's decay of the gradient mean (uwot's batch default, from memory). 0–1: larger smooths more and reacts later. */
export const ADAM_BETA1 = 0.5;
/** Adam's decay of the squared-gradient mean (uwot's batch default, from memory). 0–1: larger adapts step sizes more slowly. */
export const ADAM_BETA2 = 0.9;
/** Adam's guard against division by zero; far below any gradient's square root that matters. */
export const ADAM_EPSILON = 1e-7;

/** Negative samples per positive sample (umap-kernel.ts NEGATIVE_SAMPLE_RATE). */
const NEGATIVE_SAMPLE_RATE = 5;
/** Gradient components are clipped to ±CLIP (umap-kernel.ts GRADIENT_CLIP). */
const CLIP = 4;
/** Weight of the repulsive term (umap-kernel.ts REPULSION_STRENGTH). */
const REPULSION = 1;

/** 2^k for k = −1022 … 1023 at index k + 1022 (every normal double's exponent). */
const POWERS_OF_TWO = Float64Array.from({ length: 2046 }, (_, k) => 2 ** (k - 1022));

/**
 * x^b for x > 0 where the result is a normal double, relative error below 1e-6 (the polynomial's
 * ≤ 2.31e-7 plus rounding; tests/unit/projection/umap-batch.test.ts checks it on [1e-12, 1e12] ×
 * b ∈ [0.5, 2]). Why not Math.exp(b · Math.log(x)): the two library calls are most
 * of an epoch's time (every negative sample needs one power), and replacing the exp by what follows
 * cut the layout by 10–15 % (figures in the comment at the top). y = b · log₂ x, then
 * 2^y = 2^⌊y⌋ · 2^f with 2^⌊y⌋ from a table and 2^f by exp2Fraction. Replacing the log as well,
 * by reading the double's exponent and mantissa through a typed-array alias, measured slower in the
 * layout (the aliased store and load stall) though faster alone. The layout is a stochastic descent
 * with clipped steps; errors this small change nothing that matters (trustworthiness in the tests).
 * A result below 2^−1022 comes out as 0 and one from 2^1024 (or within rounding of the largest
 * double) as Infinity; in the layout, where 1 + a·x^b is what counts, neither changes anything.
 * @param {number} x
 * @param {number} b
 */
export function fastPower(x, b) {
  const y = b * Math.LOG2E * Math.log(x);
  if (y < -1022) return 0;
  if (y >= 1024) return Infinity;
  const whole = Math.floor(y);
  return /** @type {number} */ (POWERS_OF_TWO[whole + 1022]) * exp2Fraction(y - whole);
}

/**
 * 2^f for f ∈ [0, 1): degree-5 polynomial, relative error ≤ 2.31e-7 (numpy Chebyshev.fit).
 * @param {number} f
 */
function exp2Fraction(f) {
  return ((((0.0018943794347199485 * f + 0.008940582498355587) * f + 0.055876556900091474) * f + 0.24013169185808214) * f + 0.6931567767014679) * f + 0.9999997696329799;
}

/**
 * Starting state of vertex i's negative-sample stream in one epoch (a mulberry32 state).
 * @param {number} seed
 * @param {number} epoch
 * @param {number} i
 */
export function vertexStream(seed, epoch, i) {
  return fmix32(fmix32(fmix32(seed | 0) ^ epoch) ^ i);
}

/**
 * @typedef {object} BatchState
 * @property {number} n vertices
 * @property {Int32Array} rowStart n + 1: vertex i's edges are rowStart[i] … rowStart[i + 1] − 1
 * @property {Int32Array} cols edge → other end j
 * @property {Float64Array} perSample edge → epochs between its samples (> 0: every edge is sampled)
 * @property {Float64Array} nextSample edge → epoch of its next sample
 * @property {Float64Array} nextNegative edge → epoch of its next negative sample
 * @property {Float64Array} m1 2n, Adam's first moment
 * @property {Float64Array} m2 2n, Adam's second moment
 */

/**
 * Runs epoch `epoch` for vertices [from, to): reads positions from `read`, writes the moved
 * positions of those vertices to `write` (both n × 2), and advances their edges' bookkeeping.
 * @param {BatchState} state
 * @param {number} from
 * @param {number} to
 * @param {Float64Array} read
 * @param {Float64Array} write
 * @param {number} epoch 0-based
 * @param {number} nEpochs
 * @param {number} a curve parameter
 * @param {number} b curve parameter
 * @param {number} seed
 */
export function batchEpoch(state, from, to, read, write, epoch, nEpochs, a, b, seed) {
  const { n, rowStart, cols, perSample, nextSample, nextNegative, m1, m2 } = state;
  const alpha = 1 - epoch / nEpochs;
  const attractScale = -2 * a * b;
  const repelScale = 2 * REPULSION * b;
  // Bias corrections of Adam after epoch + 1 updates; the same numbers in every thread.
  const correction1 = 1 - Math.pow(ADAM_BETA1, epoch + 1);
  const correction2 = 1 - Math.pow(ADAM_BETA2, epoch + 1);
  for (let i = from; i < to; i++) {
    let s = vertexStream(seed, epoch, i);
    const xi = read[2 * i];
    const yi = read[2 * i + 1];
    let gx = 0;
    let gy = 0;
    const end = rowStart[i + 1];
    for (let e = rowStart[i]; e < end; e++) {
      if (nextSample[e] > epoch) continue;
      const j = cols[e];
      const dx = xi - read[2 * j];
      const dy = yi - read[2 * j + 1];
      const d2 = dx * dx + dy * dy;
      if (d2 > 0) {
        const power = fastPower(d2, b);
        const coefficient = (attractScale * (power / d2)) / (a * power + 1);
        gx += 2 * clip(coefficient * dx);
        gy += 2 * clip(coefficient * dy);
      }
      const every = perSample[e];
      nextSample[e] += every;
      const perNegative = every / NEGATIVE_SAMPLE_RATE;
      const negatives = Math.floor((epoch - nextNegative[e]) / perNegative);
      for (let p = 0; p < negatives; p++) {
        // mulberry32, inlined (lib/align/random.ts has the same generator).
        s = (s + 0x6d2b79f5) | 0;
        let t = Math.imul(s ^ (s >>> 15), 1 | s);
        t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
        const other = Math.floor((((t ^ (t >>> 14)) >>> 0) / 4294967296) * n);
        const ox = xi - read[2 * other];
        const oy = yi - read[2 * other + 1];
        const o2 = ox * ox + oy * oy;
        if (o2 > 0) {
          const repel = repelScale / ((0.001 + o2) * (a * fastPower(o2, b) + 1));
          gx += clip(repel * ox);
          gy += clip(repel * oy);
        } else if (other !== i) {
          // Coincident distinct points: push by the clip value (umap-js's rule).
          gx += CLIP;
          gy += CLIP;
        }
      }
      nextNegative[e] += negatives * perNegative;
    }
    const cx = 2 * i;
    const cy = cx + 1;
    m1[cx] = ADAM_BETA1 * m1[cx] + (1 - ADAM_BETA1) * gx;
    m1[cy] = ADAM_BETA1 * m1[cy] + (1 - ADAM_BETA1) * gy;
    m2[cx] = ADAM_BETA2 * m2[cx] + (1 - ADAM_BETA2) * gx * gx;
    m2[cy] = ADAM_BETA2 * m2[cy] + (1 - ADAM_BETA2) * gy * gy;
    write[cx] = xi + (alpha * (m1[cx] / correction1)) / (Math.sqrt(m2[cx] / correction2) + ADAM_EPSILON);
    write[cy] = yi + (alpha * (m1[cy] / correction1)) / (Math.sqrt(m2[cy] / correction2) + ADAM_EPSILON);
  }
}

/** @param {number} x */
function clip(x) {
  return x > CLIP ? CLIP : x < -CLIP ? -CLIP : x;
}
