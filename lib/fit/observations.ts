/**
 * The long observation table → a typed design for the factorization machine.
 *
 * A table has one row per observation: a row entity (e.g. shop), a column entity (e.g. category), an
 * outcome, optional covariates and an optional offset. Rows arrive one by one (`ObservationReader`),
 * so a file can be streamed through the import module's parser (lib/fit/read-observations.ts) without
 * holding its text; `buildDesign` is the same for a table already in memory.
 *
 * Bad input is refused with an ImportError (lib/import/types.ts) naming file, line and column, the
 * first 20 places listed and the rest counted, exactly as the import module reports factor files.
 */
import { PlaceCollector, plural, quoteCell, singleError, throwFirst } from '@/lib/import/places';
import { columnNames, resolveColumn, type Row } from '@/lib/import/rows';
import { isNumberLike, toFinite } from '@/lib/import/text';
import { ImportError } from '@/lib/import/types';
import type { CovariateSpec, Likelihood } from './settings';

/** Everything the numeric core needs; indexes are 0-based into rowIds / columnIds. */
export interface Design {
  likelihood: Likelihood;
  /** Number of observations. */
  n: number;
  /** Row-entity ids in first-appearance order. */
  rowIds: string[];
  columnIds: string[];
  /** n row-entity indexes. */
  row: Int32Array;
  /** n column-entity indexes. */
  column: Int32Array;
  /** n outcomes. */
  y: Float64Array;
  /** Number of covariate columns p after one-hot encoding. */
  p: number;
  /** p names: the column name for a numeric covariate, "column=level" for an indicator. */
  covariateNames: string[];
  /** n × p covariates, row-major, raw (the fit standardises internally). */
  x: Float64Array;
  /** n values added to the linear predictor, or null. Already on the linear-predictor (log) scale. */
  offset: Float64Array | null;
  /** Things the analyst should know that do not stop the fit (perfect separation, …). */
  warnings: string[];
}

/** What the reader needs from the settings (a subset of ResolvedFitSettings). */
export interface ObservationColumns {
  rowColumn: string;
  columnColumn: string;
  outcome: string;
  covariates: readonly CovariateSpec[];
  offset: string | null;
  offsetScale: 'log' | 'exposure';
  likelihood: Likelihood;
  rank: number;
}

interface CovariatePlan {
  name: string;
  index: number;
  type: 'numeric' | 'categorical';
}

interface Plan {
  width: number;
  names: (string | number)[];
  rowIndex: number;
  columnIndex: number;
  outcomeIndex: number;
  offsetIndex: number;
  covariates: CovariatePlan[];
}

class GrowableFloat64 {
  data = new Float64Array(1024);
  length = 0;
  push(value: number): void {
    if (this.length === this.data.length) {
      const next = new Float64Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = value;
  }
  toArray(): Float64Array {
    return this.data.slice(0, this.length);
  }
}

class GrowableInt32 {
  data = new Int32Array(1024);
  length = 0;
  push(value: number): void {
    if (this.length === this.data.length) {
      const next = new Int32Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = value;
  }
  toArray(): Int32Array {
    return this.data.slice(0, this.length);
  }
}

/** Levels of a categorical column (entity ids, or a covariate's categories) in first-appearance order. */
class Levels {
  readonly index = new Map<string, number>();
  readonly names: string[] = [];
  readonly firstLine: number[] = [];
  lookup(value: string, line: number): number {
    let at = this.index.get(value);
    if (at === undefined) {
      at = this.names.length;
      this.index.set(value, at);
      this.names.push(value);
      this.firstLine.push(line);
    }
    return at;
  }
}

/** How many entity or level names a warning lists before "and N more". */
const LISTED = 5;

function listNames(names: readonly string[], total: number): string {
  const shown = names.slice(0, LISTED).map(quoteCell).join(', ');
  return total > LISTED ? `${shown} and ${total - LISTED} more` : shown;
}

/** Number of parameters the model has with this design and rank (μ, a, b, β, γ, δ; not the Gaussian noise scale). */
export function parameterCount(rows: number, columns: number, p: number, rank: number): number {
  return 1 + rows + columns + p + (rows + columns) * rank;
}

/**
 * Refuses a rank the data cannot support. Two rules:
 *   - K < min(I, J): the interaction matrix [γ_i·δ_j] has rank at most min(I, J), and after the main
 *     effects take out one row and one column direction at most min(I, J) − 1 are left;
 *   - fewer parameters than observations. Priors keep an over-parameterised fit finite, but then the
 *     factors are determined by the prior rather than the data.
 */
export function checkRank(file: string, rows: number, columns: number, p: number, n: number, rank: number): void {
  const limit = Math.min(rows, columns) - 1;
  if (rank > limit) {
    throw singleError('rank_too_large', file, `rank ${rank} is more than the data can support: with ${plural(rows, 'row entity', 'row entities')} and ${plural(columns, 'column entity', 'column entities')} the rank can be at most ${limit} (one less than the smaller count); choose a smaller rank`);
  }
  const parameters = parameterCount(rows, columns, p, rank);
  if (parameters >= n) {
    const most = Math.floor((n - 2 - rows - columns - p) / (rows + columns));
    throw singleError(
      'rank_too_large',
      file,
      `rank ${rank} is more than the data can support: the model would have ${parameters} parameters for ${plural(n, 'observation')}` +
        (most >= 1 ? `; with these entities the rank can be at most ${most}` : '; there are too few observations per entity for any rank'),
    );
  }
}

/**
 * Reads observations row by row: `plan` with the header and a sample of rows (to tell numeric from
 * categorical covariates), then `add` for every data row, then `finish`.
 */
export class ObservationReader {
  private plan: Plan | null = null;
  private readonly rowLevels = new Levels();
  private readonly columnLevels = new Levels();
  private readonly rowIndex = new GrowableInt32();
  private readonly columnIndex = new GrowableInt32();
  private readonly outcome = new GrowableFloat64();
  private readonly offsetValues = new GrowableFloat64();
  private numeric: GrowableFloat64[] = [];
  private categorical: { levels: Levels; codes: GrowableInt32 }[] = [];
  private readonly ragged: PlaceCollector;
  private readonly blank: PlaceCollector;
  private readonly invalid: PlaceCollector;
  private readonly badOutcome: PlaceCollector;
  private readonly badOffset: PlaceCollector;

  constructor(
    private readonly file: string,
    private readonly settings: ObservationColumns,
  ) {
    this.ragged = new PlaceCollector('ragged_rows', file);
    this.blank = new PlaceCollector('blank_entity', file);
    this.invalid = new PlaceCollector('invalid_value', file);
    this.badOutcome = new PlaceCollector(settings.likelihood === 'bernoulli' ? 'outcome_not_binary' : 'outcome_not_count', file);
    this.badOffset = new PlaceCollector('invalid_exposure', file);
  }

  /** Decides the column roles. `sample` are the first data rows (not the header). */
  start(header: readonly string[], sample: readonly Row[]): void {
    const width = header.length;
    const names = columnNames(width, header);
    const find = (spec: string, what: string) => resolveColumn(this.file, spec, header, width, what);
    const s = this.settings;
    const rowIndex = find(s.rowColumn, 'row entity column');
    const columnIndex = find(s.columnColumn, 'column entity column');
    const outcomeIndex = find(s.outcome, 'outcome column');
    const offsetIndex = s.offset === null ? -1 : find(s.offset, 'offset column');
    if (rowIndex === columnIndex) throw singleError('same_column', this.file, `the row and column entities are both column ${quoteCell(String(names[rowIndex]))}; pick two different columns`);
    const used = new Set([rowIndex, columnIndex, outcomeIndex, offsetIndex]);
    if (used.size < (offsetIndex < 0 ? 3 : 4)) throw singleError('same_column', this.file, 'the entity, outcome and offset columns must all be different columns');
    const covariates: CovariatePlan[] = [];
    for (const spec of s.covariates) {
      const column = typeof spec === 'string' ? spec : spec.column;
      const index = find(column, 'covariate column');
      if (used.has(index)) throw singleError('same_column', this.file, `the covariate ${quoteCell(column)} is already used as an entity, outcome, offset or covariate column`);
      used.add(index);
      let type: 'numeric' | 'categorical';
      if (typeof spec !== 'string') type = spec.type;
      else {
        // The import module's rule: numeric when more than half of the filled cells look like numbers.
        let filled = 0;
        let numberLike = 0;
        for (const row of sample) {
          const cell = row.cells[index] ?? '';
          if (cell.trim() === '') continue;
          filled += 1;
          if (isNumberLike(cell)) numberLike += 1;
        }
        type = numberLike * 2 > filled ? 'numeric' : 'categorical';
      }
      covariates.push({ name: String(names[index]), index, type });
    }
    this.numeric = covariates.filter((c) => c.type === 'numeric').map(() => new GrowableFloat64());
    this.categorical = covariates.filter((c) => c.type === 'categorical').map(() => ({ levels: new Levels(), codes: new GrowableInt32() }));
    this.plan = { width, names, rowIndex, columnIndex, outcomeIndex, offsetIndex, covariates };
  }

  add(row: Row): void {
    const plan = this.plan;
    if (plan === null) throw new Error('ObservationReader.add before start');
    const { cells, line } = row;
    if (cells.length !== plan.width) {
      this.ragged.add({ line, message: `expected ${plan.width} fields, found ${cells.length}` });
      return;
    }
    const rowId = (cells[plan.rowIndex] ?? '').trim();
    const columnId = (cells[plan.columnIndex] ?? '').trim();
    if (rowId === '') this.blank.add({ line, column: plan.names[plan.rowIndex], message: 'the row entity is blank' });
    if (columnId === '') this.blank.add({ line, column: plan.names[plan.columnIndex], message: 'the column entity is blank' });
    this.rowIndex.push(this.rowLevels.lookup(rowId, line));
    this.columnIndex.push(this.columnLevels.lookup(columnId, line));

    const outcomeCell = cells[plan.outcomeIndex] ?? '';
    const y = this.number(outcomeCell, line, plan.names[plan.outcomeIndex]);
    if (Number.isFinite(y)) {
      const likelihood = this.settings.likelihood;
      if (likelihood === 'bernoulli' && y !== 0 && y !== 1) this.badOutcome.add({ line, column: plan.names[plan.outcomeIndex], message: `${quoteCell(outcomeCell)} is not 0 or 1` });
      else if (likelihood === 'poisson' && (y < 0 || !Number.isInteger(y)))
        this.badOutcome.add({ line, column: plan.names[plan.outcomeIndex], message: `${quoteCell(outcomeCell)} is not a count (a whole number ≥ 0)` });
    }
    this.outcome.push(y);

    if (plan.offsetIndex >= 0) {
      const cell = cells[plan.offsetIndex] ?? '';
      let value = this.number(cell, line, plan.names[plan.offsetIndex]);
      if (this.settings.offsetScale === 'exposure' && Number.isFinite(value)) {
        if (value <= 0) this.badOffset.add({ line, column: plan.names[plan.offsetIndex], message: `${quoteCell(cell)} is not a positive exposure` });
        value = Math.log(value);
      }
      this.offsetValues.push(value);
    }

    let numeric = 0;
    let categorical = 0;
    for (const covariate of plan.covariates) {
      const cell = cells[covariate.index] ?? '';
      if (covariate.type === 'numeric') {
        this.numeric[numeric++]?.push(this.number(cell, line, plan.names[covariate.index]));
      } else {
        const target = this.categorical[categorical++];
        const level = cell.trim();
        if (level === '') this.invalid.add({ line, column: plan.names[covariate.index], message: 'the category is blank' });
        target?.codes.push(target.levels.lookup(level, line));
      }
    }
  }

  private number(cell: string, line: number, column: string | number | undefined): number {
    const value = toFinite(cell);
    if (Number.isNaN(value)) {
      if (this.invalid.wants) this.invalid.add({ line, column, message: cell.trim() === '' ? 'the value is blank' : `${quoteCell(cell)} is not a finite number` });
      else this.invalid.tally();
    }
    return value;
  }

  /** Checks what needs all rows and returns the design, or throws the first kind of problem found. */
  finish(): Design {
    const plan = this.plan;
    if (plan === null) throw singleError('empty_file', this.file, 'the file holds no rows');
    const s = this.settings;
    throwFirst([
      [this.ragged, (n) => `${plural(n, 'row')} with the wrong number of fields (every row needs one field per column)`],
      [this.blank, (n) => `${plural(n, 'blank entity', 'blank entities')} (every observation needs a row and a column entity)`],
      [this.invalid, (n) => `${n === 1 ? '1 value is' : `${n} values are`} not finite numbers or blank (outcome, offset and numeric covariates need finite numbers on every row)`],
      [this.badOutcome, (n) => (s.likelihood === 'bernoulli' ? `${plural(n, 'outcome')} not 0 or 1 (a Bernoulli outcome is 0 or 1)` : `${plural(n, 'outcome')} not a count (a Poisson outcome is a whole number ≥ 0)`)],
      [this.badOffset, (n) => `${plural(n, 'exposure')} not positive (with offsetScale "exposure" the offset column holds exposures > 0, whose log is used)`],
    ]);
    const n = this.outcome.length;
    if (n === 0) throw singleError('empty_file', this.file, 'the file has a header but no data rows');
    const entityColumn = (levels: Levels, index: number) => {
      if (levels.names.length < 2) {
        throw singleError('single_level', this.file, `the entity column ${quoteCell(String(plan.names[index]))} has a single level (${quoteCell(levels.names[0] ?? '')}); a factorization needs at least two entities on each side`, {
          column: plan.names[index],
          message: 'only one distinct value',
        });
      }
    };
    entityColumn(this.rowLevels, plan.rowIndex);
    entityColumn(this.columnLevels, plan.columnIndex);

    const y = this.outcome.toArray();
    let min = Infinity;
    let max = -Infinity;
    for (let t = 0; t < n; t++) {
      const v = y[t] as number;
      if (v < min) min = v;
      if (v > max) max = v;
    }
    if (min === max) {
      throw singleError('constant_outcome', this.file, `the outcome ${quoteCell(String(plan.names[plan.outcomeIndex]))} is ${min} on every row; there is nothing to fit`, { column: plan.names[plan.outcomeIndex], message: 'constant outcome' });
    }

    // Covariates: numeric columns as given, categorical ones as indicators of every level but the first.
    const covariateNames: string[] = [];
    const columns: Float64Array[] = [];
    const warnings: string[] = [];
    let numeric = 0;
    let categorical = 0;
    for (const covariate of plan.covariates) {
      if (covariate.type === 'numeric') {
        const values = this.numeric[numeric++]?.toArray() ?? new Float64Array(n);
        let lo = Infinity;
        let hi = -Infinity;
        for (let t = 0; t < n; t++) {
          lo = Math.min(lo, values[t] as number);
          hi = Math.max(hi, values[t] as number);
        }
        if (lo === hi) throw singleError('constant_covariate', this.file, `the covariate ${quoteCell(covariate.name)} is ${lo} on every row, so its effect cannot be told from the intercept; leave it out`, { column: covariate.name, message: 'constant covariate' });
        covariateNames.push(covariate.name);
        columns.push(values);
      } else {
        const target = this.categorical[categorical++];
        if (target === undefined) continue;
        const levelNames = target.levels.names;
        if (levelNames.length < 2) throw singleError('constant_covariate', this.file, `the categorical covariate ${quoteCell(covariate.name)} has a single level (${quoteCell(levelNames[0] ?? '')}); leave it out`, { column: covariate.name, message: 'single level' });
        const codes = target.codes.toArray();
        for (let level = 1; level < levelNames.length; level++) {
          const indicator = new Float64Array(n);
          for (let t = 0; t < n; t++) if (codes[t] === level) indicator[t] = 1;
          covariateNames.push(`${covariate.name}=${levelNames[level] ?? ''}`);
          columns.push(indicator);
        }
      }
    }
    const p = columns.length;
    const x = new Float64Array(n * p);
    for (let c = 0; c < p; c++) {
      const values = columns[c] as Float64Array;
      for (let t = 0; t < n; t++) x[t * p + c] = values[t] as number;
    }

    const row = this.rowIndex.toArray();
    const column = this.columnIndex.toArray();
    const rows = this.rowLevels.names.length;
    const cols = this.columnLevels.names.length;
    checkRank(this.file, rows, cols, p, n, s.rank);

    const design: Design = {
      likelihood: s.likelihood,
      n,
      rowIds: this.rowLevels.names,
      columnIds: this.columnLevels.names,
      row,
      column,
      y,
      p,
      covariateNames,
      x,
      offset: plan.offsetIndex >= 0 ? this.offsetValues.toArray() : null,
      warnings,
    };
    if (s.likelihood === 'bernoulli') warnings.push(...separationWarnings(design, String(plan.names[plan.rowIndex]), String(plan.names[plan.columnIndex])));
    return design;
  }
}

/**
 * Perfect-separation warnings for a Bernoulli outcome: a group whose outcomes are all 0 or all 1
 * (an entity, or a level of a categorical covariate) or a numeric covariate that splits the 0s from
 * the 1s. The maximum-likelihood effect is then ±∞; the prior (priorScale) keeps the fit finite, so
 * these are warnings, but the effect's size there says more about the prior than about the data.
 */
export function separationWarnings(design: Design, rowName = 'row entity', columnName = 'column entity'): string[] {
  const warnings: string[] = [];
  const { n, y, p, x } = design;
  const groupCheck = (index: Int32Array, ids: readonly string[], what: string) => {
    const ones = new Int32Array(ids.length);
    const totals = new Int32Array(ids.length);
    for (let t = 0; t < n; t++) {
      const g = index[t] as number;
      totals[g] = (totals[g] as number) + 1;
      ones[g] = (ones[g] as number) + (y[t] as number);
    }
    const separated: string[] = [];
    for (let g = 0; g < ids.length; g++) if (ones[g] === 0 || ones[g] === totals[g]) separated.push(ids[g] ?? '');
    if (separated.length > 0) {
      warnings.push(
        `Perfect separation: ${plural(separated.length, `${what} has`, `${what}s have`)} only 0s or only 1s as outcomes (${listNames(separated, separated.length)}); their main effect is held finite only by the prior scale, so read it as "very high" or "very low" rather than as a size.`,
      );
    }
  };
  groupCheck(design.row, design.rowIds, `${rowName} value`);
  groupCheck(design.column, design.columnIds, `${columnName} value`);
  for (let c = 0; c < p; c++) {
    let max0 = -Infinity;
    let min0 = Infinity;
    let max1 = -Infinity;
    let min1 = Infinity;
    for (let t = 0; t < n; t++) {
      const v = x[t * p + c] as number;
      if (y[t] === 1) {
        max1 = Math.max(max1, v);
        min1 = Math.min(min1, v);
      } else {
        max0 = Math.max(max0, v);
        min0 = Math.min(min0, v);
      }
    }
    if (max0 <= min1 || max1 <= min0) {
      warnings.push(`Perfect separation: the covariate ${quoteCell(design.covariateNames[c] ?? '')} splits the 0s from the 1s completely; its coefficient is held finite only by the prior scale.`);
    }
  }
  return warnings;
}

/** Builds a design from a table in memory: `header` names the columns; `rows` are the data rows (line numbers count the header as line 1). */
export function buildDesign(file: string, header: readonly string[], rows: readonly (readonly string[])[], settings: ObservationColumns): Design {
  const reader = new ObservationReader(file, settings);
  const sample = rows.slice(0, 500).map((cells, index) => ({ cells: [...cells], line: index + 2 }));
  reader.start(header, sample);
  rows.forEach((cells, index) => reader.add({ cells: cells as string[], line: index + 2 }));
  return reader.finish();
}

export { ImportError };
