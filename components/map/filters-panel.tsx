'use client';

import type { MapView } from '@/lib/map/view-state';
import type { EntityData } from './types';

type Filters = MapView['filters'];

/** Filters by metadata: points outside fade rather than vanish, so the context stays visible. */
export function FiltersPanel({ entities, filters, onChange }: { entities: EntityData | undefined; filters: Filters; onChange: (filters: Filters) => void }) {
  const columns = entities?.columns ?? [];
  if (columns.length === 0) return null;
  const current = (name: string) => filters.find((f) => f.column === name);
  const replace = (name: string, next: Filters[number] | null) => onChange([...filters.filter((f) => f.column !== name), ...(next ? [next] : [])]);
  return (
    <details className="border border-rule bg-paper-raised p-3 text-sm" open={filters.length > 0}>
      <summary className="small-caps cursor-pointer font-semibold">Filters{filters.length > 0 ? ` (${filters.length})` : ''}</summary>
      <div className="mt-2 flex flex-col gap-3">
        {columns.map((column) => {
          const filter = current(column.name);
          if (column.type === 'category') {
            if (column.levels.length > 40) return null;
            const chosen = filter && 'values' in filter ? new Set(filter.values) : null;
            return (
              <fieldset key={column.name} className="flex flex-col gap-0.5">
                <legend className="text-xs font-medium">{column.name}</legend>
                {column.levels.map((level) => (
                  <label key={level} className="flex items-center gap-1.5 text-xs">
                    <input
                      type="checkbox"
                      checked={chosen ? chosen.has(level) : true}
                      onChange={(e) => {
                        const base = chosen ? new Set(chosen) : new Set(column.levels);
                        if (e.target.checked) base.add(level);
                        else base.delete(level);
                        replace(column.name, base.size === column.levels.length ? null : { column: column.name, values: [...base] });
                      }}
                    />
                    {level}
                  </label>
                ))}
              </fieldset>
            );
          }
          const range = filter && 'min' in filter ? filter : null;
          return (
            <fieldset key={column.name} className="flex items-end gap-2 text-xs">
              <legend className="text-xs font-medium">{column.name}</legend>
              {(['min', 'max'] as const).map((end) => (
                <label key={end} className="flex flex-col">
                  <span className="text-ink-muted">{end === 'min' ? 'from' : 'to'}</span>
                  <input
                    inputMode="decimal"
                    className="w-24 border border-rule bg-paper px-1.5 py-1"
                    defaultValue={range ? String(range[end]) : ''}
                    onBlur={(e) => {
                      const value = e.target.value.trim() === '' ? null : Number(e.target.value);
                      if (value === null || Number.isNaN(value)) return replace(column.name, null);
                      const next = end === 'min' ? { column: column.name, min: value, max: range ? range.max : Number.MAX_VALUE } : { column: column.name, min: range ? range.min : -Number.MAX_VALUE, max: value };
                      replace(column.name, next);
                    }}
                  />
                </label>
              ))}
            </fieldset>
          );
        })}
        {filters.length > 0 && (
          <button type="button" className="self-start text-xs text-accent hover:underline" onClick={() => onChange([])}>
            Clear filters
          </button>
        )}
      </div>
    </details>
  );
}
