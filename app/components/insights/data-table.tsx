import {
  type ColumnDef,
  flexRender,
  getCoreRowModel,
  getPaginationRowModel,
  getSortedRowModel,
  type SortingState,
  useReactTable,
  type VisibilityState,
} from "@tanstack/react-table";
import { useId, useState } from "react";

/**
 * A sortable, paged table with a column chooser (TanStack Table 8). The server renders the first page in the
 * initial order; sorting, paging and columns work once the page's script has loaded.
 */
export function DataTable<T>({
  data,
  columns,
  caption,
  pageSize = 15,
  initialSorting = [],
  initialHidden = {},
  empty = "Nothing in this range.",
}: {
  data: T[];
  // biome-ignore lint/suspicious/noExplicitAny: TanStack column values are of mixed types
  columns: ColumnDef<T, any>[];
  caption: string;
  pageSize?: number;
  initialSorting?: SortingState;
  initialHidden?: VisibilityState;
  empty?: string;
}) {
  const [sorting, setSorting] = useState<SortingState>(initialSorting);
  const [columnVisibility, setColumnVisibility] = useState<VisibilityState>(initialHidden);
  const [pagination, setPagination] = useState({ pageIndex: 0, pageSize });
  const table = useReactTable({
    data,
    columns,
    state: { sorting, columnVisibility, pagination },
    onSortingChange: setSorting,
    onColumnVisibilityChange: setColumnVisibility,
    onPaginationChange: setPagination,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getPaginationRowModel: getPaginationRowModel(),
  });
  const id = useId();
  const pages = Math.max(1, table.getPageCount());
  return (
    <div>
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <details className="relative">
          <summary className="btn cursor-pointer px-3 py-1">Columns</summary>
          <fieldset className="absolute z-20 mt-1 flex min-w-56 flex-col gap-1 rounded-md border border-line bg-panel p-3 shadow-lg">
            <legend className="sr-only">Columns shown</legend>
            {table.getAllLeafColumns().map((c) => (
              <label key={c.id} className="flex items-center gap-2 text-sm">
                <input type="checkbox" checked={c.getIsVisible()} onChange={c.getToggleVisibilityHandler()} />
                {typeof c.columnDef.header === "string" ? c.columnDef.header : c.id}
              </label>
            ))}
          </fieldset>
        </details>
        <p className="text-sm text-muted" aria-live="polite">
          {data.length} rows · page {pagination.pageIndex + 1} of {pages}
        </p>
      </div>
      <div className="overflow-x-auto rounded-lg border border-line bg-panel">
        <table className="w-full text-left text-sm" aria-describedby={`${id}-caption`}>
          <caption id={`${id}-caption`} className="sr-only">
            {caption}
          </caption>
          <thead className="bg-sunken text-muted">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const sorted = h.column.getIsSorted();
                  return (
                    <th
                      key={h.id}
                      scope="col"
                      className="px-3 py-2 font-medium whitespace-nowrap"
                      aria-sort={
                        sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined
                      }
                    >
                      {h.column.getCanSort() ? (
                        <button
                          type="button"
                          className="inline-flex items-center gap-1 hover:text-ink"
                          onClick={h.column.getToggleSortingHandler()}
                        >
                          {flexRender(h.column.columnDef.header, h.getContext())}
                          <span aria-hidden="true">
                            {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}
                          </span>
                        </button>
                      ) : (
                        flexRender(h.column.columnDef.header, h.getContext())
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.length === 0 ? (
              <tr>
                <td className="px-3 py-4 text-muted" colSpan={table.getVisibleLeafColumns().length}>
                  {empty}
                </td>
              </tr>
            ) : (
              table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-t border-line">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="px-3 py-2 align-top">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      {pages > 1 ? (
        <nav aria-label={`${caption}: pages`} className="mt-2 flex flex-wrap items-center gap-2 text-sm">
          <button
            type="button"
            className="btn px-3 py-1"
            onClick={() => table.firstPage()}
            disabled={!table.getCanPreviousPage()}
          >
            First
          </button>
          <button
            type="button"
            className="btn px-3 py-1"
            onClick={() => table.previousPage()}
            disabled={!table.getCanPreviousPage()}
          >
            Previous
          </button>
          <button
            type="button"
            className="btn px-3 py-1"
            onClick={() => table.nextPage()}
            disabled={!table.getCanNextPage()}
          >
            Next
          </button>
          <button
            type="button"
            className="btn px-3 py-1"
            onClick={() => table.lastPage()}
            disabled={!table.getCanNextPage()}
          >
            Last
          </button>
          <label className="ml-2 flex items-center gap-1">
            Rows per page
            <select
              className="field-input w-auto py-1"
              value={pagination.pageSize}
              onChange={(e) => table.setPageSize(Number(e.target.value))}
            >
              {[10, 15, 25, 50, 100].map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </select>
          </label>
        </nav>
      ) : null}
    </div>
  );
}

export const pct = (x: number, digits = 1) => `${(x * 100).toFixed(digits)} %`;
