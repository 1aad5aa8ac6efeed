import { ImportError, MAX_REPORTED_PLACES, type ImportPlace } from './types';

/**
 * Collects offending places of one kind. Keeps the first MAX_REPORTED_PLACES and counts the rest,
 * so a file that is wrong on every one of a million lines still reports in bounded memory.
 */
export class PlaceCollector {
  readonly places: ImportPlace[] = [];
  count = 0;

  constructor(
    readonly code: string,
    readonly file: string,
  ) {}

  add(place: Omit<ImportPlace, 'file'>): void {
    this.count += 1;
    if (this.places.length < MAX_REPORTED_PLACES) this.places.push({ file: this.file, ...place });
  }

  /** Whether another place would still be listed; past that, callers only `tally` (no message to build). */
  get wants(): boolean {
    return this.places.length < MAX_REPORTED_PLACES;
  }

  tally(): void {
    this.count += 1;
  }

  get any(): boolean {
    return this.count > 0;
  }

  /** Builds the error: `summary` says what is wrong; the first place and the count are appended. */
  toError(summary: string): ImportError {
    return new ImportError(this.code, `${this.file}: ${summary}${describeFirst(this.places[0], this.count)}`, this.file, this.places, this.count);
  }
}

export function describePlace(place: Omit<ImportPlace, 'file' | 'message'>): string {
  const parts: string[] = [];
  if (place.line !== undefined) parts.push(`line ${place.line}`);
  if (place.column !== undefined) parts.push(typeof place.column === 'number' ? `column ${place.column}` : `column "${place.column}"`);
  if (place.index !== undefined) parts.push(`index ${place.index}`);
  if (place.byteOffset !== undefined) parts.push(`byte offset ${place.byteOffset}`);
  return parts.join(', ');
}

function describeFirst(place: ImportPlace | undefined, count: number): string {
  if (!place) return '.';
  const where = describePlace(place);
  const first = where ? ` First at ${where}: ${place.message}.` : ` ${place.message}.`;
  const more = count > 1 ? ` ${count} places in all${count > MAX_REPORTED_PLACES ? `; the first ${MAX_REPORTED_PLACES} are listed` : ''}.` : '';
  return `.${first}${more}`;
}

/** An error with a single place (or none). */
export function singleError(code: string, file: string, summary: string, place?: Omit<ImportPlace, 'file'>): ImportError {
  const collector = new PlaceCollector(code, file);
  if (place) collector.add(place);
  return collector.toError(summary);
}

/** Throws the first collector (in the given priority order) that holds any place. */
export function throwFirst(collectors: ReadonlyArray<readonly [PlaceCollector, (count: number) => string]>): void {
  for (const [collector, summary] of collectors) {
    if (collector.any) throw collector.toError(summary(collector.count));
  }
}

export function plural(count: number, one: string, many = `${one}s`): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** "1 value is not a finite number" / "3 values are not finite numbers". */
export function notFinite(count: number, what: string, kind = 'number'): string {
  return count === 1 ? `1 ${what} is not a finite ${kind}` : `${count} ${what}s are not finite ${kind}s`;
}

/** Shows a cell in a message without letting a huge or multi-line cell swamp it. */
export function quoteCell(cell: string): string {
  const shown = cell.length > 40 ? `${cell.slice(0, 37)}...` : cell;
  return JSON.stringify(shown);
}
