/**
 * The contract between the file parsers (lib/import/parse*.ts) and the import pipeline that aligns
 * and stores factor sets. Parsers never touch the database.
 */

export const IMPORT_FORMATS = ['delimited-wide', 'delimited-long', 'draws-wide', 'draws-long', 'npy', 'json'] as const;
export type ImportFormat = (typeof IMPORT_FORMATS)[number];

/** One offending place in an uploaded file. Text formats give line (1-based) and column; binary ones a byte offset or array index. */
export interface ImportPlace {
  file: string;
  line?: number;
  /** 1-based column number, or the column's header name when there is one. */
  column?: number | string;
  byteOffset?: number;
  /** e.g. "[3, 17, 2]" for a draws×N×K array. */
  index?: string;
  message: string;
}

/** Bad input: names the file and lists the first 20 offending places; `count` is how many there were in all. */
export class ImportError extends Error {
  constructor(
    readonly code: string,
    message: string,
    readonly file: string,
    readonly places: ImportPlace[] = [],
    readonly count: number = places.length,
  ) {
    super(message);
    this.name = 'ImportError';
  }
}

export const MAX_REPORTED_PLACES = 20;

export interface ImportLimits {
  /** Largest accepted upload, in bytes. */
  maxBytes: number;
  /** Most entities (rows of the factor matrix). */
  maxRows: number;
  /** Most latent dimensions. */
  maxDims: number;
  /** Most posterior draws. */
  maxDraws: number;
}

export type MetadataType = 'category' | 'number' | 'date';

export interface MetadataColumn {
  name: string;
  type: MetadataType;
}

/** Metadata values per entity, in entity order: numbers for 'number', ISO strings for 'date', strings for 'category'. */
export type MetadataValue = string | number | null;

export interface ParseOptions {
  /** Skip detection. */
  format?: ImportFormat;
  /** Delimited formats: the column (header name, or 1-based number as a string) holding entity ids. */
  idColumn?: string;
  /** Delimited formats: a column holding display labels. */
  labelColumn?: string;
  delimiter?: ',' | '\t' | ';';
  /** Delimited formats: whether the first row is a header (detected when omitted). */
  header?: boolean;
  /** draws-wide: the parameter that is the factor matrix, e.g. "gamma" for gamma[i,k]. */
  parameter?: string;
  /** draws-wide: a second parameter of the same fit (e.g. "delta"), returned as `partner`. */
  partnerParameter?: string;
  /**
   * Delimited-wide: columns (header names or 1-based numbers) to keep as metadata even though they
   * hold numbers; without it every numeric column is taken as a latent dimension.
   */
  metadataColumns?: string[];
}

export interface UploadedFile {
  /** Where the upload was staged on disk. */
  path: string;
  /** The name the person gave it (for messages and detection). */
  name: string;
}

export interface ParsedMatrix {
  /** Entity ids as strings, in file order; unique. */
  ids: string[];
  /** Latent dimensions, K. */
  dims: number;
  /** N×K row-major point estimates; null when the file holds draws (the pipeline aligns them). */
  values: Float32Array | null;
  /** D×N×K, draw-major then row-major; null without draws. */
  draws: Float32Array | null;
  drawCount: number;
}

export interface ParsedFactors extends ParsedMatrix {
  format: ImportFormat;
  /** Display labels per entity, or null when there are none. */
  labels: (string | null)[] | null;
  metadataColumns: MetadataColumn[];
  /** One array per entity, aligned with `metadataColumns`. */
  metadata: MetadataValue[][];
  warnings: string[];
  /** draws-wide: every parameter name found, so the analyst can pick. */
  parameters?: string[];
  /** draws-wide with `partnerParameter`: the partner's matrix from the same draws. */
  partner?: ParsedMatrix & { parameter: string };
}
