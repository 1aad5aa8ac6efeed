/**
 * Invented demo data (PRODUCT.md's scenario), generated with fixed seeds so every demo is the same:
 * Larkspur Books' 120 shop factors with metadata, and a simulated 5,000-respondent survey embedding
 * with 200 posterior draws, each draw under its own rotation (as a sampler would leave them).
 */
import { mulberry32, normalGenerator, randomOrthogonal } from '../../lib/align/random';

const TOWNS = ['Ashby', 'Brackenford', 'Coldharbour', 'Dunmere', 'Eastwick', 'Fallowfield', 'Greyport', 'Hollins', 'Ivybridge', 'Kettleby'];
const KINDS = ['campus town', 'commuter station', 'holiday coast', 'market town'] as const;

/** Shop factors: four kinds of shop, each a loose cloud in 6 latent dimensions. */
export function larkspurShopsCsv(seed = 1201): string {
  const uniform = mulberry32(seed);
  const normal = normalGenerator(uniform);
  const k = 6;
  const centres = KINDS.map(() => Array.from({ length: k }, () => normal() * 1.6));
  const lines = [`shop_id,label,kind,region,footfall_k,opened,${Array.from({ length: k }, (_, d) => `f${d + 1}`).join(',')}`];
  for (let i = 0; i < 120; i += 1) {
    const kind = KINDS[i % KINDS.length] ?? 'market town';
    const centre = centres[i % KINDS.length] ?? [];
    const town = TOWNS[Math.floor(uniform() * TOWNS.length)] ?? 'Ashby';
    const values = centre.map((c) => (c + normal() * 0.45).toFixed(5));
    const footfall = Math.round(8 + uniform() * 40);
    const opened = `${1978 + Math.floor(uniform() * 45)}-0${1 + Math.floor(uniform() * 9)}-1${Math.floor(uniform() * 9)}`;
    lines.push(`S${String(i + 1).padStart(3, '0')},"Larkspur ${town} ${i + 1}",${kind},${i < 60 ? 'north' : 'south'},${footfall},${opened},${values.join(',')}`);
  }
  return `${lines.join('\n')}\n`;
}

export const SURVEY = { respondents: 5000, draws: 200, dims: 6 } as const;

/**
 * Survey embedding draws (D×N×K) and a labels file: five respondent segments; respondents who
 * answered few questions get wider posteriors.
 */
export function surveyDraws(seed = 5000): { draws: Float32Array; labelsCsv: string } {
  const { respondents: n, draws: d, dims: k } = SURVEY;
  const uniform = mulberry32(seed);
  const normal = normalGenerator(uniform);
  const segments = 5;
  const centres = Array.from({ length: segments * k }, () => normal() * 1.2);
  const truth = new Float64Array(n * k);
  const noise = new Float64Array(n);
  const labels = ['respondent_id,label,segment,answered,region'];
  for (let i = 0; i < n; i += 1) {
    const segment = i % segments;
    for (let c = 0; c < k; c += 1) truth[i * k + c] = (centres[segment * k + c] ?? 0) + normal() * 0.35;
    const answered = 5 + Math.floor(uniform() * 36);
    noise[i] = 0.6 / Math.sqrt(answered);
    labels.push(`${i + 1},Respondent ${String(i + 1).padStart(4, '0')},segment ${String.fromCharCode(65 + segment)},${answered},${['north', 'south', 'east', 'west'][i % 4]}`);
  }
  const draws = new Float32Array(d * n * k);
  const noisy = new Float64Array(k);
  for (let s = 0; s < d; s += 1) {
    const rotation = randomOrthogonal(k, normal);
    for (let i = 0; i < n; i += 1) {
      for (let j = 0; j < k; j += 1) noisy[j] = (truth[i * k + j] ?? 0) + normal() * (noise[i] ?? 0);
      for (let c = 0; c < k; c += 1) {
        let v = 0;
        for (let j = 0; j < k; j += 1) v += (noisy[j] ?? 0) * (rotation[j * k + c] ?? 0);
        draws[(s * n + i) * k + c] = v;
      }
    }
  }
  return { draws, labelsCsv: `${labels.join('\n')}\n` };
}
