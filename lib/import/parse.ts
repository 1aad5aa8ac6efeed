/**
 * The public entry point of the file parsers: detects the format, parses, joins a labels file and
 * infers metadata types. Pure Node: no database, no Next.js. Bad input throws ImportError only.
 */
import { detectFormat } from './detect';
import { inferMetadata, joinLabels, readLabelsFile, type RawColumn } from './metadata';
import { parseDelimitedWide } from './parse-delimited';
import { parseDrawsWide, type DrawsMatrix } from './parse-draws';
import { parseJson } from './parse-json';
import { parseLong } from './parse-long';
import { parseNpy } from './parse-npy';
import { singleError } from './places';
import { checkSize, checkTextHead, readHead, sniffRows, type Delimiter } from './text';
import { type ImportFormat, type ImportLimits, type ParsedFactors, type ParsedMatrix, type ParseOptions, type UploadedFile } from './types';

export { detectFormat };

/** Ids "1".."N", for formats that carry none (headerless wide files, draws-wide, npy). */
function countingIds(n: number): string[] {
  return Array.from({ length: n }, (_, i) => String(i + 1));
}

interface Parsed extends ParsedMatrix {
  labels: (string | null)[] | null;
  columns: RawColumn[];
  parameters?: string[];
  partner?: ParsedMatrix & { parameter: string };
}

function drawsMatrix(matrix: DrawsMatrix, drawCount: number): ParsedMatrix {
  return { ids: countingIds(matrix.rows), dims: matrix.dims, values: null, draws: matrix.draws, drawCount };
}

async function parseByFormat(file: UploadedFile, format: ImportFormat, options: ParseOptions, limits: ImportLimits, head: Buffer, size: number): Promise<Parsed> {
  if (format === 'npy') {
    const { shape, data } = await parseNpy(file, limits);
    const threeD = shape.length === 3;
    const rows = shape[threeD ? 1 : 0] ?? 0;
    const dims = shape[threeD ? 2 : 1] ?? 0;
    return { ids: countingIds(rows), dims, values: threeD ? null : data, draws: threeD ? data : null, drawCount: threeD ? (shape[0] ?? 0) : 0, labels: null, columns: [] };
  }
  checkTextHead(head, file.name);
  if (size <= head.length && head.toString('utf8').replace(/^\uFEFF/, '').trim() === '') {
    throw singleError('empty_file', file.name, 'the file holds only blank space');
  }
  if (format === 'json') {
    const { labels, ...matrix } = await parseJson(file, limits, size);
    return { ...matrix, labels, columns: [] };
  }
  const delimiter: Delimiter = options.delimiter ?? sniffRows(head).delimiter;
  switch (format) {
    case 'delimited-wide': {
      const { ids, dims, values, labels, columns } = await parseDelimitedWide(file, delimiter, options, limits);
      return { ids, dims, values, draws: null, drawCount: 0, labels, columns };
    }
    case 'delimited-long': {
      const { ids, dims, data } = await parseLong(file, delimiter, options, limits, false);
      return { ids, dims, values: data, draws: null, drawCount: 0, labels: null, columns: [] };
    }
    case 'draws-long': {
      const { ids, dims, data, drawCount } = await parseLong(file, delimiter, options, limits, true);
      return { ids, dims, values: null, draws: data, drawCount, labels: null, columns: [] };
    }
    case 'draws-wide': {
      const { parameters, drawCount, main, partner } = await parseDrawsWide(file, delimiter, options, limits);
      return {
        ...drawsMatrix(main, drawCount),
        labels: null,
        columns: [],
        parameters,
        ...(partner ? { partner: { ...drawsMatrix(partner, drawCount), parameter: partner.parameter } } : {}),
      };
    }
  }
}

/**
 * Parses an uploaded factor file (and optionally a labels file joined by id) into a factor set's
 * matrices, labels and metadata. `options.format` skips detection.
 */
export async function parseFactorFile(file: UploadedFile, options: ParseOptions, limits: ImportLimits, labelsFile?: UploadedFile): Promise<ParsedFactors> {
  const size = await checkSize(file, limits);
    const head = await readHead(file.path);
    const format = options.format ?? detectFormat(file.name, head);
    const parsed = await parseByFormat(file, format, options, limits, head, size);
    let { labels, columns } = parsed;
    const warnings: string[] = [];
    if (labelsFile) {
      const table = await readLabelsFile(labelsFile, options, limits);
      const joined = joinLabels(file.name, parsed.ids, labels, columns, table, labelsFile.name);
      labels = joined.labels;
      columns = joined.columns;
      warnings.push(...joined.warnings);
    }
    const { metadataColumns, metadata } = inferMetadata(columns, parsed.ids.length);
    const result: ParsedFactors = {
      format,
      ids: parsed.ids,
      dims: parsed.dims,
      values: parsed.values,
      draws: parsed.draws,
      drawCount: parsed.drawCount,
      labels,
      metadataColumns,
      metadata,
      warnings,
    };
    if (parsed.parameters) result.parameters = parsed.parameters;
    if (parsed.partner) result.partner = parsed.partner;
    return result;
}
