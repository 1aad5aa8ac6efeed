'use client';

import { type ColumnDef, flexRender, getCoreRowModel, getPaginationRowModel, getSortedRowModel, type SortingState, useReactTable } from '@tanstack/react-table';
import { useMemo, useState } from 'react';
import { Button } from '@/components/ui/button';
import type { EntityData } from './types';

type Cell = string | number | null;
interface Row {
  index: number;
  cells: Record<string, Cell>;
}

/** Rows built for the table at most; the CSV copy takes the whole selection. */
const TABLE_ROWS = 5000;

function cellsOf(entities: EntityData, fidelity: Float32Array | null, index: number): Record<string, Cell> {
  const cells: Record<string, Cell> = { id: entities.ids[index] ?? String(index), label: entities.labels?.[index] ?? null };
  for (const c of entities.columns) {
    cells[`m:${c.name}`] =
      c.type === 'category' ? (c.levels[c.codes[index] ?? -1] ?? null) : c.type === 'date' && c.values[index] != null ? new Date(c.values[index] as number).toISOString().slice(0, 10) : (c.values[index] ?? null);
  }
  if (entities.spread) cells.spread = entities.spread[index] ?? null;
  if (fidelity) cells.fidelity = fidelity[index] ?? null;
  return cells;
}

function csvCell(value: Cell): string {
  if (value === null) return '';
  const text = String(value);
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** The selected entities with their metadata: sortable, paged, and copied to the clipboard as CSV. */
export function SelectionTable({ entities, selection, fidelity, onFocus }: { entities: EntityData | undefined; selection: Uint32Array; fidelity: Float32Array | null; onFocus: (index: number) => void }) {
  const [sorting, setSorting] = useState<SortingState>([]);
  const [copied, setCopied] = useState<string | null>(null);
  const keys = useMemo(() => {
    if (!entities) return [] as { key: string; title: string }[];
    return [
      { key: 'id', title: 'id' },
      ...(entities.labels ? [{ key: 'label', title: 'label' }] : []),
      ...entities.columns.map((c) => ({ key: `m:${c.name}`, title: c.name })),
      ...(entities.spread ? [{ key: 'spread', title: 'spread' }] : []),
      ...(fidelity ? [{ key: 'fidelity', title: 'fidelity' }] : []),
    ];
  }, [entities, fidelity]);
  const rows = useMemo<Row[]>(() => {
    if (!entities) return [];
    return Array.from(selection.subarray(0, TABLE_ROWS), (index) => ({ index, cells: cellsOf(entities, fidelity, index) }));
  }, [entities, selection, fidelity]);
  const columns = useMemo<ColumnDef<Row>[]>(
    () =>
      keys.map(({ key, title }) => ({
        id: key,
        header: title,
        accessorFn: (row) => row.cells[key] ?? null,
        sortUndefined: 'last',
        cell: (info) => {
          const value = info.getValue<Cell>();
          if (key === 'id') {
            return (
              <button type="button" className="text-accent hover:underline" onClick={() => onFocus(info.row.original.index)}>
                {String(value)}
              </button>
            );
          }
          return typeof value === 'number' ? value.toLocaleString('en-GB', { maximumFractionDigits: 3 }) : (value ?? '—');
        },
      })),
    [keys, onFocus],
  );
  const table = useReactTable({
    data: rows,
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getPaginationRowModel: getPaginationRowModel(),
    initialState: { pagination: { pageSize: 25 } },
  });

  const copy = async () => {
    if (!entities) return;
    const lines = [keys.map((k) => csvCell(k.title)).join(',')];
    for (const index of selection) {
      const cells = cellsOf(entities, fidelity, index);
      lines.push(keys.map((k) => csvCell(cells[k.key] ?? null)).join(','));
    }
    try {
      await navigator.clipboard.writeText(`${lines.join('\n')}\n`);
      setCopied(`Copied ${selection.length.toLocaleString('en-GB')} rows as CSV.`);
    } catch (error) {
      console.error('Copying the selection failed', error);
      setCopied('The browser refused the clipboard; select the table text instead.');
    }
  };

  return (
    <section className="flex flex-col gap-2" aria-labelledby="selection-title">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h3 id="selection-title" className="small-caps font-semibold">
          Selection <span className="tabular font-normal text-ink-muted" data-testid="selection-count">{selection.length.toLocaleString('en-GB')}</span>
        </h3>
        <div className="flex items-center gap-2">
          {copied && (
            <span className="text-xs text-ink-muted" role="status">
              {copied}
            </span>
          )}
          <Button variant="secondary" onClick={copy} disabled={selection.length === 0} className="px-2.5 py-1.5">
            Copy as CSV
          </Button>
        </div>
      </div>
      {selection.length === 0 ? (
        <p className="text-sm text-ink-muted">Nothing selected. Click a point, or draw a lasso or a box.</p>
      ) : (
        <div className="overflow-x-auto border border-rule">
          <table className="tabular w-full text-left text-xs">
            <thead className="bg-paper-sunk">
              {table.getHeaderGroups().map((group) => (
                <tr key={group.id}>
                  {group.headers.map((header) => (
                    <th key={header.id} className="px-2 py-1.5 font-semibold" aria-sort={header.column.getIsSorted() === 'asc' ? 'ascending' : header.column.getIsSorted() === 'desc' ? 'descending' : 'none'}>
                      <button type="button" className="hover:underline" onClick={header.column.getToggleSortingHandler()}>
                        {flexRender(header.column.columnDef.header, header.getContext())}
                        {header.column.getIsSorted() === 'asc' ? ' ↑' : header.column.getIsSorted() === 'desc' ? ' ↓' : ''}
                      </button>
                    </th>
                  ))}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-t border-rule">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="px-2 py-1">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
          <div className="flex items-center justify-between gap-2 border-t border-rule px-2 py-1.5 text-xs">
            <span className="text-ink-muted">
              Page {table.getState().pagination.pageIndex + 1} of {Math.max(1, table.getPageCount())}
              {selection.length > TABLE_ROWS ? ` · the table lists the first ${TABLE_ROWS.toLocaleString('en-GB')}; the CSV copy has all` : ''}
            </span>
            <span className="flex gap-2">
              <Button variant="secondary" className="px-2 py-1" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
                Previous
              </Button>
              <Button variant="secondary" className="px-2 py-1" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
                Next
              </Button>
            </span>
          </div>
        </div>
      )}
    </section>
  );
}
