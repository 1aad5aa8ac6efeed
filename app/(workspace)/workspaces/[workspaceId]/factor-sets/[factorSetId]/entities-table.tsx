'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { type ColumnDef, flexRender, getCoreRowModel, type SortingState, useReactTable } from '@tanstack/react-table';
import { useEffect, useMemo, useState } from 'react';
import type { Entity } from '@/lib/factor-sets/factor-sets';
import type { MetadataColumn } from '@/lib/import/types';

interface EntityPage {
  items: Entity[];
  total: number;
  page: number;
  pageSize: number;
}

const PAGE_SIZE = 50;

/** Paging, sorting and search run on the server, so a million entities cost the browser one page. */
export function EntitiesTable({
  factorSetId,
  metadataColumns,
  hasSpread,
}: {
  factorSetId: string;
  metadataColumns: MetadataColumn[];
  hasSpread: boolean;
}) {
  const [page, setPage] = useState(1);
  const [sorting, setSorting] = useState<SortingState>([]);
  const [searchText, setSearchText] = useState('');
  const [search, setSearch] = useState('');

  useEffect(() => {
    const timer = setTimeout(() => {
      setSearch(searchText.trim());
      setPage(1);
    }, 250);
    return () => clearTimeout(timer);
  }, [searchText]);

  const sort = sorting[0];
  const query = useQuery({
    queryKey: ['factor-sets', factorSetId, 'entities', page, sort?.id ?? 'index', sort?.desc ?? false, search],
    queryFn: async (): Promise<EntityPage> => {
      const params = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE), sort: sort?.id ?? 'index', dir: sort?.desc ? 'desc' : 'asc' });
      if (search) params.set('q', search);
      const response = await fetch(`/api/factor-sets/${factorSetId}/entities?${params}`);
      if (!response.ok) throw new Error(`The entities could not be loaded (${response.status})`);
      return (await response.json()) as EntityPage;
    },
    placeholderData: keepPreviousData,
  });

  const columns = useMemo<ColumnDef<Entity>[]>(
    () => [
      { id: 'id', header: 'Id', accessorFn: (e) => e.id },
      { id: 'label', header: 'Label', accessorFn: (e) => e.label ?? '—' },
      ...(hasSpread
        ? [{ id: 'spread', header: 'Posterior spread', accessorFn: (e: Entity) => (e.spread === null ? '—' : e.spread.toPrecision(3)) }]
        : []),
      ...metadataColumns.map(
        (c): ColumnDef<Entity> => ({
          id: `metadata:${c.name}`,
          header: `${c.name}`,
          meta: { type: c.type },
          accessorFn: (e) => {
            const v = e.metadata[c.name];
            return v === null || v === undefined ? '—' : String(v);
          },
        }),
      ),
    ],
    [metadataColumns, hasSpread],
  );

  const table = useReactTable({
    data: query.data?.items ?? [],
    columns,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    state: { sorting },
    onSortingChange: (updater) => {
      setSorting(updater);
      setPage(1);
    },
    rowCount: query.data?.total ?? 0,
  });

  const total = query.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));

  return (
    <section aria-labelledby="entities-heading" className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h3 id="entities-heading" className="text-lg font-semibold">
          Entities <span className="tabular text-ink-muted">({total.toLocaleString('en-GB')})</span>
        </h3>
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Search by id or label</span>
          <input
            type="search"
            value={searchText}
            onChange={(e) => setSearchText(e.target.value)}
            className="w-64 border border-rule bg-paper-raised px-3 py-1.5"
          />
        </label>
      </div>
      {query.error && <p role="alert" className="text-sm text-danger">{query.error.message}</p>}
      <div className="overflow-x-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm" data-testid="entities-table">
          <thead className="border-b border-rule text-xs text-ink-muted">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  const type = (header.column.columnDef.meta as { type?: string } | undefined)?.type;
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : 'none'}
                      className="px-3 py-2 font-medium"
                    >
                      <button type="button" className="inline-flex items-center gap-1 hover:text-ink" onClick={header.column.getToggleSortingHandler()}>
                        {flexRender(header.column.columnDef.header, header.getContext())}
                        {type && <span className="small-caps text-ink-faint">{type}</span>}
                        <span aria-hidden="true">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : ''}</span>
                      </button>
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr key={row.id} className="border-b border-rule last:border-0">
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-1.5">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))}
            {!query.isPending && total === 0 && (
              <tr>
                <td className="px-3 py-4 text-ink-muted" colSpan={columns.length}>
                  No entity matches.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
      <nav aria-label="Entity pages" className="tabular flex items-center gap-3 text-sm">
        <button type="button" className="border border-rule px-2 py-1 disabled:opacity-40" disabled={page <= 1} onClick={() => setPage((p) => p - 1)}>
          Previous
        </button>
        <span>
          Page {page} of {pages}
        </span>
        <button type="button" className="border border-rule px-2 py-1 disabled:opacity-40" disabled={page >= pages} onClick={() => setPage((p) => p + 1)}>
          Next
        </button>
      </nav>
    </section>
  );
}
