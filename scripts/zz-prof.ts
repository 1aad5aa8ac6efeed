import { promises as fs } from 'node:fs';
import { parseFactorFile } from '../lib/import/parse';
const rows = Number(process.argv[2]); const dims = Number(process.argv[3]);
const file = `/tmp/prof-${rows}x${dims}.csv`;
try { await fs.stat(file); } catch {
  const h = await fs.open(file, 'w'); let st = 12345; let chunk: string[] = [`id,${Array.from({length: dims}, (_, k) => `f${k+1}`).join(',')}`];
  for (let i = 0; i < rows; i++) { const c = [`e${i}`]; for (let k = 0; k < dims; k++) { st = (Math.imul(st, 1664525) + 1013904223) >>> 0; c.push(Math.fround((st / 2 ** 32 - 0.5) * 6).toPrecision(7)); } chunk.push(c.join(',')); if (chunk.length >= 10000) { await h.write(chunk.join('\n') + '\n'); chunk = []; } }
  if (chunk.length) await h.write(chunk.join('\n') + '\n'); await h.close();
}
const size = (await fs.stat(file)).size;
const t = performance.now();
const p = await parseFactorFile({ path: file, name: 'x.csv' }, {}, { maxBytes: 4e9, maxRows: 4e6, maxDims: 512, maxDraws: 5000 });
const s = (performance.now() - t) / 1000;
console.log(`parse ${rows}x${dims}: ${(size/1e6).toFixed(1)} MB in ${s.toFixed(2)} s = ${(size/1e6/s).toFixed(1)} MB/s; rss ${(process.memoryUsage().rss/1e6).toFixed(0)} MB`, p.ids.length, p.dims);
