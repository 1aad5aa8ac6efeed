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

export const CATEGORIES = [
  'Crime fiction', 'Literary fiction', 'Romance', 'Science fiction', 'Fantasy', 'Historical fiction', 'Thrillers', 'Short stories',
  'Poetry', 'Drama', 'Biography', 'Memoir', 'Local history', 'World history', 'Politics', 'Philosophy',
  'Popular science', 'Nature writing', 'Gardening', 'Cookery', 'Food and drink', 'Travel guides', 'Maps and walking', 'Cycling',
  'Sailing and coast', 'Art and design', 'Photography', 'Music', 'Film', 'Comics and graphic novels', "Children's picture books", 'Young adult',
  'School revision', 'University textbooks', 'Languages', 'Business', 'Personal finance', 'Self-help', 'Puzzles and games', 'Stationery',
] as const;

export const SALES_MONTHS = 12;

/**
 * A long table of Larkspur Books' monthly sales: one row per shop × category × month (120 × 40 × 12),
 * with the shop's footfall that month (thousands of visitors). Counts are Poisson around
 * footfall × exp(μ + shop effect + category effect + season + γ_shop·δ_category), where the shop
 * factors γ follow the four kinds of shop above (campus towns favour textbooks and languages,
 * commuter stations thrillers and business, holiday coasts maps, sailing and picture books) and
 * footfall swings with the season of each kind. Invented; the seed fixes every number.
 */
export function larkspurSalesCsv(seed = 2026): string {
  const uniform = mulberry32(seed);
  const normal = normalGenerator(uniform);
  const k = 3;
  const J = CATEGORIES.length;
  // Category factors: a random part plus a pull towards the kinds that favour them.
  const favours: Record<(typeof KINDS)[number], string[]> = {
    'campus town': ['University textbooks', 'Languages', 'Philosophy', 'Politics', 'Comics and graphic novels', 'Stationery', 'Young adult'],
    'commuter station': ['Thrillers', 'Crime fiction', 'Business', 'Personal finance', 'Self-help', 'Puzzles and games', 'Popular science'],
    'holiday coast': ['Maps and walking', 'Sailing and coast', "Children's picture books", 'Travel guides', 'Nature writing', 'Cycling', 'Romance'],
    'market town': ['Local history', 'Gardening', 'Cookery', 'Food and drink', 'Biography', 'Historical fiction', 'School revision'],
  };
  const kindCentre = KINDS.map(() => Array.from({ length: k }, () => normal()));
  const delta = CATEGORIES.map((category) => {
    const base = Array.from({ length: k }, () => normal() * 0.25);
    KINDS.forEach((kind, c) => {
      if (favours[kind].includes(category)) for (let d = 0; d < k; d += 1) base[d] = (base[d] ?? 0) + 0.55 * (kindCentre[c]?.[d] ?? 0);
    });
    return base;
  });
  const categoryEffect = CATEGORIES.map(() => normal() * 0.5);
  // Seasonal footfall by kind (month 1 = January): coasts peak in summer, campuses dip in it.
  const season = (kind: (typeof KINDS)[number], month: number): number => {
    const summer = Math.cos(((month - 7) / 12) * 2 * Math.PI);
    if (kind === 'holiday coast') return 1 + 0.6 * summer;
    if (kind === 'campus town') return 1 - 0.35 * summer;
    if (kind === 'commuter station') return 1 - 0.1 * summer;
    return 1 + 0.1 * summer;
  };
  const december = 0.35;
  const lines = ['shop_id,category,month,footfall_k,sales'];
  for (let i = 0; i < 120; i += 1) {
    const kind = KINDS[i % KINDS.length] ?? 'market town';
    const centre = kindCentre[i % KINDS.length] ?? [];
    const gamma = centre.map((c) => c + normal() * 0.3);
    const shopEffect = normal() * 0.3;
    const baseFootfall = 8 + uniform() * 40;
    for (let m = 1; m <= SALES_MONTHS; m += 1) {
      const footfall = Math.max(1, baseFootfall * season(kind, m) * (1 + normal() * 0.05));
      for (let j = 0; j < J; j += 1) {
        let dot = 0;
        for (let d = 0; d < k; d += 1) dot += (gamma[d] ?? 0) * (delta[j]?.[d] ?? 0);
        const eta = Math.log(footfall) - 1.6 + shopEffect + (categoryEffect[j] ?? 0) + (m === 12 ? december : 0) + dot;
        const sales = poisson(Math.exp(eta), uniform);
        lines.push(`S${String(i + 1).padStart(3, '0')},${JSON.stringify(CATEGORIES[j] ?? '')},2025-${String(m).padStart(2, '0')},${footfall.toFixed(2)},${sales}`);
      }
    }
  }
  return `${lines.join('\n')}\n`;
}

/** A Poisson draw by inversion of the cumulative distribution (fine for the demo's means, well below 1,000). */
function poisson(lambda: number, uniform: () => number): number {
  const u = uniform();
  let k = 0;
  let p = Math.exp(-lambda);
  let cumulative = p;
  while (u > cumulative && k < 10_000) {
    k += 1;
    p *= lambda / k;
    cumulative += p;
  }
  return k;
}
