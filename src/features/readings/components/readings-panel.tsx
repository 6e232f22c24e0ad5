import { Fragment, useMemo, useState, type KeyboardEvent, type MouseEvent, type ReactNode } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnFiltersState,
  type FilterFn,
  type SortingFn,
  type SortingState,
} from '@tanstack/react-table';
import type { Build } from '@shared/builds/build.schema';
import type { BuildFlag } from '@shared/review/review.schema';
import { reviewStates, type Reading, type ReviewState } from '@shared/readings/reading.schema';
import { Button } from '@/components/ui/button';
import { DeleteDialog } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Select } from '@/components/ui/field';
import { LoadMore } from '@/components/ui/load-more';
import { Menu, MenuContent, MenuItem, MenuTrigger } from '@/components/ui/menu';
import { Panel } from '@/components/ui/panel';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { useToast } from '@/components/ui/toast';
import { formatTime } from '@/features/clips/lib/clip-format';
import { reviewQueries } from '@/features/review/api/review-queries';
import { FlagNote } from '@/features/review/components/flag-note';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useDeleteReading } from '../api/reading-mutations';
import { readingInstrumentsQuery, readingQueries, readingsCsvUrl } from '../api/reading-queries';
import { enteredFigures, estimateSortKey, estimateText, readingKindWords, uncertaintyText } from '../lib/reading-text';
import { useNarrowScreen } from '../lib/use-narrow';
import { ReadingEditor } from './reading-editor';
import { ReadingHistoryDialog } from './reading-history-dialog';
import { ReadingImportDialog } from './reading-import-dialog';
import { ReadingWarnings, ReviewStateBadge } from './reading-badges';

export interface ReadingsPanelProps {
  build: Build;
  /** Opens the reading's clip in the player at its moment. */
  onOpen: (reading: Reading) => void;
}

const reviewOrder: Record<ReviewState, number> = { flagged: 0, unchecked: 1, checked: 2 };

/** Filter on an id the row holds: '' = any; 'none' = no value. */
const idEquals =
  (pick: (r: Reading) => number | string | null): FilterFn<Reading> =>
  (row, _columnId, wanted: string) =>
    !wanted || String(pick(row.original) ?? 'none') === wanted;

const column = createColumnHelper<Reading>();

/** Estimates sort by quantity, then by size in a common unit (`estimateSortKey`); unknown sizes last. */
const byEstimate: SortingFn<Reading> = (a, b) => {
  const [qa, va] = estimateSortKey(a.original);
  const [qb, vb] = estimateSortKey(b.original);
  if (qa !== qb) return qa - qb;
  if (Number.isNaN(va) || Number.isNaN(vb)) return Number(Number.isNaN(va)) - Number(Number.isNaN(vb));
  return va === vb ? 0 : va < vb ? -1 : 1;
};

const columns = [
  column.accessor('name', {
    id: 'name',
    header: 'Name / key',
    sortingFn: 'alphanumeric',
    cell: ({ row }) => (
      <>
        <span className="block min-w-28 font-medium">{row.original.name}</span>
        <span className="figures block text-2xs text-ink-muted">{row.original.key}</span>
      </>
    ),
  }),
  column.accessor((r) => r.result.value ?? r.result.valueUm, {
    id: 'entered',
    header: 'Value as entered',
    sortingFn: byEstimate,
    cell: ({ row }) =>
      // A bracket's two blades on two lines, so the column stays narrow.
      enteredFigures(row.original)
        .split(' · ')
        .map((line) => (
          <span key={line} className="figures block whitespace-nowrap">
            {line}
          </span>
        )),
  }),
  column.accessor((r) => r.result.value ?? r.result.valueUm, {
    id: 'estimate',
    header: 'Estimate ± u',
    sortingFn: byEstimate,
    cell: ({ row }) => (
      <>
        <span className="figures block whitespace-nowrap">{row.original.result.display}</span>
        <span className="figures block whitespace-nowrap text-xs text-ink-muted">± {uncertaintyText(row.original)}</span>
      </>
    ),
  }),
  column.accessor((r) => reviewOrder[r.reviewState], {
    id: 'reviewState',
    header: 'Review',
    filterFn: idEquals((r) => r.reviewState),
    cell: ({ row }) => <ReviewStateBadge state={row.original.reviewState} />,
  }),
  column.accessor((r) => r.warnings.length, {
    id: 'warnings',
    header: 'Warnings',
    cell: ({ row }) => <ReadingWarnings warnings={row.original.warnings} compact />,
  }),
  column.accessor((r) => r.partName ?? '', {
    id: 'part',
    header: 'Part',
    filterFn: idEquals((r) => r.partId),
    cell: ({ row }) => <span className="whitespace-nowrap">{row.original.partName ?? <span className="text-ink-muted">none</span>}</span>,
  }),
  column.accessor('instrumentName', {
    id: 'instrument',
    header: 'Instrument',
    filterFn: idEquals((r) => r.instrumentId),
    cell: ({ getValue }) => <span className="block min-w-28">{getValue()}</span>,
  }),
  column.accessor((r) => readingKindWords[r.kind], {
    id: 'kind',
    header: 'Kind',
    cell: ({ getValue }) => getValue(),
  }),
  column.accessor((r) => `${r.clipTitle}\u0000${String(r.atMs).padStart(10, '0')}`, {
    id: 'clip',
    header: 'Clip · time',
    filterFn: idEquals((r) => r.clipId),
    cell: ({ row }) => (
      <>
        <span className="block min-w-24 max-w-40 break-words">{row.original.clipTitle}</span>
        <span className="figures text-xs text-ink-muted">{formatTime(row.original.atMs / 1000)}</span>
      </>
    ),
  }),
  column.accessor('takenOn', { id: 'takenOn', header: 'Taken on', cell: ({ getValue }) => <span className="figures whitespace-nowrap">{getValue()}</span> }),
];

const numericColumns = new Set(['entered', 'estimate']);

/** The sorts a phone offers in a select, since it shows no column headings. */
const sortChoices: [string, string][] = [
  ['name:asc', 'Name, A to Z'],
  ['estimate:asc', 'Estimate, smallest first'],
  ['estimate:desc', 'Estimate, largest first'],
  ['reviewState:asc', 'Review: flagged first'],
  ['clip:asc', 'Clip and time'],
  ['takenOn:desc', 'Taken on, newest first'],
];

function sortFrom(value: string): SortingState {
  const [id, dir] = value.split(':');
  return id ? [{ id, desc: dir === 'desc' }] : [];
}

/** The build's readings: sortable, filterable, each row opening its moment, edited in place. */
export function ReadingsPanel({ build, onOpen }: ReadingsPanelProps) {
  const readings = useInfiniteQuery(readingQueries.list(build.id));
  const items = useMemo(() => readings.data?.pages.flatMap((p) => p.items) ?? [], [readings.data]);

  return (
    <Panel
      title="Readings"
      description="Every reading of this build, tied to its moment. Click a row (or press Enter on it) to see that moment in the player."
      actions={
        <div className="flex flex-wrap items-center gap-3">
          <ReadingImportDialog buildId={build.id} />
          {items.length > 0 && (
            <a href={readingsCsvUrl(build.id)} download className="text-sm" data-print="hide">
              Export CSV
            </a>
          )}
        </div>
      }
    >
      {readings.isPending ? (
        <LoadingState label="Loading the readings…" className="py-4" />
      ) : !readings.data ? (
        <ErrorState
          title="The readings could not be loaded"
          error={readings.error}
          onRetry={() => void readings.refetch()}
          retrying={readings.isRefetching}
        />
      ) : items.length === 0 ? (
        <EmptyState title="No readings logged yet">
          Open a ready clip, step to the frame where the instrument is read, and press “Log a reading” (or R in the player). The reading
          keeps the moment and its evidence still.
        </EmptyState>
      ) : (
        <div className="flex flex-col gap-3">
          <ReadingsTable build={build} items={items} onOpen={onOpen} />
          <LoadMore query={readings} shown={items.length} what="readings" />
        </div>
      )}
    </Panel>
  );
}

function ReadingsTable({ build, items, onOpen }: { build: Build; items: Reading[]; onOpen: (reading: Reading) => void }) {
  const [sorting, setSorting] = useState<SortingState>([]);
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [editingId, setEditingId] = useState<number | null>(null);
  const [historyOf, setHistoryOf] = useState<Reading | null>(null);
  const [deleting, setDeleting] = useState<Reading | null>(null);
  const [refusal, setRefusal] = useState<{ id: number; text: string } | null>(null);
  const remove = useDeleteReading();
  const instruments = useQuery(readingInstrumentsQuery);
  const flags = useQuery(reviewQueries.buildFlags(build.id));
  const flagsOf = (reading: Reading) => (flags.data ?? []).filter((f) => f.subjectType === 'reading' && f.subjectId === reading.id);
  const { toast } = useToast();

  const table = useReactTable({
    data: items,
    columns,
    state: { sorting, columnFilters },
    onSortingChange: setSorting,
    onColumnFiltersChange: setColumnFilters,
    getRowId: (r) => String(r.id),
    // Smallest first on the first click, for figures as for names.
    sortDescFirst: false,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });

  const filterValue = (id: string) => (columnFilters.find((f) => f.id === id)?.value as string | undefined) ?? '';
  const setFilter = (id: string, value: string) => table.getColumn(id)?.setFilterValue(value || undefined);
  const unique = <T,>(pick: (r: Reading) => [string, T] | null) => [...new Map(items.flatMap((r) => (pick(r) ? [pick(r)!] : []))).entries()];
  const instrumentOptions = unique((r) => [String(r.instrumentId), r.instrumentName]);
  const clipOptions = unique((r) => [String(r.clipId), r.clipTitle]);
  const rows = table.getRowModel().rows;
  const narrow = useNarrowScreen();
  const sortValue = sorting[0] ? `${sorting[0].id}:${sorting[0].desc ? 'desc' : 'asc'}` : '';
  const colCount = columns.length + 1;

  function open(event: MouseEvent | KeyboardEvent, reading: Reading) {
    // Buttons and boxes inside the row do their own thing.
    // Menu items are portalled, but their events still bubble through the row in React's tree.
    if ((event.target as HTMLElement).closest('button, a, input, select, textarea, [role="menu"], [role="menuitem"]')) return;
    onOpen(reading);
  }

  return (
    <>
      <div className="grid grid-cols-2 gap-2 sm:grid-cols-4 lg:grid-cols-[repeat(4,minmax(0,1fr))_auto]" role="group" aria-label="Filter the readings">
        <Field label="Part">
          <Select size="sm" value={filterValue('part')} onChange={(e) => setFilter('part', e.target.value)}>
            <option value="">Any part</option>
            {build.parts.map((p) => (
              <option key={p.id} value={p.id}>
                {p.name}
                {p.serial ? ` · ${p.serial}` : ''}
              </option>
            ))}
            <option value="none">Not tied to a part</option>
          </Select>
        </Field>
        <Field label="Instrument">
          <Select size="sm" value={filterValue('instrument')} onChange={(e) => setFilter('instrument', e.target.value)}>
            <option value="">Any instrument</option>
            {instrumentOptions.map(([id, name]) => (
              <option key={id} value={id}>
                {name}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Review state">
          <Select size="sm" value={filterValue('reviewState')} onChange={(e) => setFilter('reviewState', e.target.value)}>
            <option value="">Any state</option>
            {reviewStates.map((s) => (
              <option key={s} value={s}>
                {s}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Clip">
          <Select size="sm" value={filterValue('clip')} onChange={(e) => setFilter('clip', e.target.value)}>
            <option value="">Any clip</option>
            {clipOptions.map(([id, title]) => (
              <option key={id} value={id}>
                {title}
              </option>
            ))}
          </Select>
        </Field>
        <div className="col-span-full flex items-end gap-3 lg:col-span-1">
          <p className="figures pb-1.5 text-xs text-ink-muted" aria-live="polite">
            {rows.length} of {items.length} shown
          </p>
          {columnFilters.length > 0 && (
            <Button size="sm" variant="quiet" onClick={() => setColumnFilters([])}>
              Clear filters
            </Button>
          )}
        </div>
      </div>

      {refusal && (
        <p role="alert" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm text-danger">
          {refusal.text}
        </p>
      )}

      {narrow ? (
        <>
          <Field label="Sort by" className="max-w-64">
            <Select size="sm" value={sortValue} onChange={(e) => setSorting(sortFrom(e.target.value))}>
              <option value="">As logged</option>
              {sortChoices.map(([value, label]) => (
                <option key={value} value={value}>
                  {label}
                </option>
              ))}
            </Select>
          </Field>
          <ol className="flex flex-col divide-y divide-rule rounded-md border border-rule" aria-label="Readings of this build">
            {rows.length === 0 && <li className="px-3 py-4 text-sm text-ink-muted">No reading matches these filters. Change a filter, or clear them.</li>}
            {rows.map((row) =>
              editingId === row.original.id ? (
                <li key={row.id} className="bg-accent-wash/40 px-3 py-3">
                  <ReadingEditor build={build} reading={row.original} instruments={instruments.data ?? []} onDone={() => setEditingId(null)} />
                </li>
              ) : (
                <ReadingCard
                  key={row.id}
                  flags={flagsOf(row.original)}
                  reading={row.original}
                  refused={refusal?.id === row.original.id}
                  onOpen={(event) => open(event, row.original)}
                  menu={
                    <RowMenu
                      reading={row.original}
                      onEdit={() => setEditingId(row.original.id)}
                      onHistory={() => setHistoryOf(row.original)}
                      onDelete={() => setDeleting(row.original)}
                    />
                  }
                />
              ),
            )}
          </ol>
        </>
      ) : (
        <Table
          caption="Readings of this build. Sort by a column heading; click a row or press Enter on it to open its moment."
          captionHidden
          maxHeight="32rem"
          // Below this the box scrolls sideways rather than squeezing every column to a word a line.
          className="min-w-[66rem]"
        >
          <THead>
            {table.getHeaderGroups().map((group) => (
              <Tr key={group.id}>
                <Th className="w-9 px-1">
                  <span className="sr-only">Actions</span>
                </Th>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  return (
                    <Th
                      key={header.id}
                      numeric={numericColumns.has(header.column.id)}
                      aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : 'none'}
                      className="px-2 align-bottom"
                    >
                      <button
                        type="button"
                        onClick={header.column.getToggleSortingHandler()}
                        className="inline-flex items-end gap-1 rounded-sm text-left uppercase hover:text-ink"
                        title="Sort by this column"
                      >
                        {flexRender(header.column.columnDef.header, header.getContext())}
                        <span aria-hidden="true" className="figures">
                          {sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}
                        </span>
                      </button>
                    </Th>
                  );
                })}
              </Tr>
            ))}
          </THead>
          <TBody>
            {rows.length === 0 && (
              <Tr>
                <Td colSpan={colCount} className="py-4 text-ink-muted">
                  No reading matches these filters. Change a filter, or clear them.
                </Td>
              </Tr>
            )}
            {rows.map((row) => {
              const reading = row.original;
              if (editingId === reading.id) {
                return (
                  <Tr key={row.id} className="bg-accent-wash/40">
                    <Td colSpan={colCount} className="py-3">
                      {/* As wide as the visible box, and held there when the table is scrolled sideways. */}
                      <div className="sticky left-3 max-w-[58rem]">
                        <ReadingEditor
                          build={build}
                          reading={reading}
                          instruments={instruments.data ?? []}
                          onDone={() => setEditingId(null)}
                        />
                      </div>
                    </Td>
                  </Tr>
                );
              }
              const standing = flagsOf(reading);
              return (
                <Fragment key={row.id}>
                <Tr
                  tabIndex={0}
                  data-reading-row={reading.key}
                  aria-label={`${reading.name}, ${estimateText(reading)}, at ${formatTime(reading.atMs / 1000)} in ${reading.clipTitle}`}
                  onClick={(event) => open(event, reading)}
                  onKeyDown={(event) => {
                    if (event.key === 'Enter' && event.target === event.currentTarget) {
                      event.preventDefault();
                      open(event, reading);
                    }
                  }}
                  className={cn('cursor-pointer hover:bg-accent-wash/50 focus-visible:bg-accent-wash/50', refusal?.id === reading.id && 'bg-danger-wash/40')}
                >
                  <Td className="px-1 align-top">
                    <RowMenu reading={reading} onEdit={() => setEditingId(reading.id)} onHistory={() => setHistoryOf(reading)} onDelete={() => setDeleting(reading)} />
                  </Td>
                  {row.getVisibleCells().map((cell) => (
                    <Td key={cell.id} numeric={numericColumns.has(cell.column.id)} className="px-2 align-top">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </Td>
                  ))}
                </Tr>
                {standing.length > 0 && (
                  <Tr data-flags-of={reading.key}>
                    <Td colSpan={colCount} className="px-2 pt-0 pb-3">
                      {/* Held in the visible box when the table scrolls sideways, like the editor row. */}
                      <div className="sticky left-2 flex max-w-[58rem] flex-col gap-2">
                        {standing.map((flag) => (
                          <FlagNote key={flag.id} flag={flag} />
                        ))}
                      </div>
                    </Td>
                  </Tr>
                )}
                </Fragment>
              );
            })}
          </TBody>
        </Table>
      )}

      <ReadingHistoryDialog reading={historyOf} onClose={() => setHistoryOf(null)} />
      <DeleteDialog
        target={deleting}
        onClose={() => setDeleting(null)}
        what="reading"
        description="The reading and its history go; the moment and its evidence still stay in the clip. A reading a clearance uses or a story cites cannot be deleted."
        pending={remove.isPending}
        remove={(id, callbacks) => remove.mutate(id, callbacks)}
        onDeleted={(target) => {
          setRefusal(null);
          toast({ tone: 'success', title: 'Reading deleted', description: `“${target.name}” is gone.` });
        }}
        onRefused={(target, e) => setRefusal({ id: target.id, text: `“${target.name}” was not deleted: ${errorMessage(e)}` })}
      />
    </>
  );
}

/** A reading's actions: edit in place, history, delete. */
function RowMenu({ reading, onEdit, onHistory, onDelete }: { reading: Reading; onEdit: () => void; onHistory: () => void; onDelete: () => void }) {
  return (
    // Not modal: a dialog opened from an item would otherwise fight the menu over focus.
    <Menu modal={false}>
      <MenuTrigger asChild>
        <Button size="sm" variant="quiet" className="h-7 px-2" aria-label={`Actions for ${reading.name}`}>
          <span aria-hidden="true">⋯</span>
        </Button>
      </MenuTrigger>
      <MenuContent align="start">
        <MenuItem onSelect={onEdit}>Edit name, value, part or note</MenuItem>
        <MenuItem onSelect={onHistory}>History</MenuItem>
        <MenuItem tone="danger" onSelect={onDelete}>
          Delete
        </MenuItem>
      </MenuContent>
    </Menu>
  );
}

/** On a phone: one card per reading, the figures first, in the table's order and filters. */
function ReadingCard({
  reading,
  flags,
  menu,
  refused,
  onOpen,
}: {
  reading: Reading;
  flags: readonly BuildFlag[];
  menu: ReactNode;
  refused: boolean;
  onOpen: (event: MouseEvent | KeyboardEvent) => void;
}) {
  return (
    <li
      tabIndex={0}
      data-reading-card={reading.key}
      aria-label={`${reading.name}, ${estimateText(reading)}, at ${formatTime(reading.atMs / 1000)} in ${reading.clipTitle}`}
      onClick={onOpen}
      onKeyDown={(event) => {
        if (event.key === 'Enter' && event.target === event.currentTarget) {
          event.preventDefault();
          onOpen(event);
        }
      }}
      className={cn('flex cursor-pointer flex-col gap-1 px-3 py-2 hover:bg-accent-wash/50 focus-visible:bg-accent-wash/50', refused && 'bg-danger-wash/40')}
    >
      <div className="flex items-start justify-between gap-2">
        <div className="min-w-0">
          <p className="font-medium">{reading.name}</p>
          <p className="figures text-2xs text-ink-muted">{reading.key}</p>
        </div>
        {menu}
      </div>
      <p className="figures text-base">
        {reading.result.display} <span className="text-xs text-ink-muted">± {uncertaintyText(reading)} (u)</span>
      </p>
      <p className="figures text-xs text-ink-muted">as entered: {enteredFigures(reading)}</p>
      <div className="flex flex-wrap items-start gap-2">
        <ReviewStateBadge state={reading.reviewState} />
        {reading.warnings.length > 0 && <ReadingWarnings warnings={reading.warnings} compact />}
      </div>
      <p className="text-xs text-ink-muted">
        {reading.partName ?? 'no part'} · {reading.instrumentName} · {readingKindWords[reading.kind]}
        <br />
        {reading.clipTitle} at <span className="figures">{formatTime(reading.atMs / 1000)}</span> · taken <span className="figures">{reading.takenOn}</span>
      </p>
      {flags.map((flag) => (
        <FlagNote key={flag.id} flag={flag} className="mt-1" />
      ))}
    </li>
  );
}
