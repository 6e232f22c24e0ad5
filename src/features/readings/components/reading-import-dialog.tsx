import { Fragment, useState, type ChangeEvent } from 'react';
import { Dialog as RadixDialog } from 'radix-ui';
import { isAnyUnit } from '@shared/measure/quantities';
import {
  importFieldLabels,
  importFields,
  MAX_IMPORT_CSV_CHARS,
  type ImportField,
  type ImportRow,
  type ImportRowStatus,
  type ReadingImportResponse,
} from '@shared/readings/reading-import.schema';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogTrigger } from '@/components/ui/dialog';
import { Field, Input, Select } from '@/components/ui/field';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useImportPreview, useImportReadings, type MappingChoices } from '../api/reading-import';
import { withReadingUnit } from '../lib/reading-text';

/** Status words, each with its own mark so the table does not rely on colour. */
const statusWords: Record<ImportRowStatus, { mark: string; words: string }> = {
  refused: { mark: '×', words: 'Refused' },
  new: { mark: '+', words: 'New' },
  unchanged: { mark: '=', words: 'Already logged' },
};
const statusOrder: Record<ImportRowStatus, number> = { refused: 0, new: 1, unchanged: 2 };

function figuresOf(row: ImportRow): string {
  const p = row.preview;
  if (!p) return '—';
  const u = (text: string) => (isAnyUnit(p.unit) && p.unit !== '1' ? withReadingUnit(text, p.unit) : text);
  if (p.kind === 'bracket') return `enters ${u(p.passes ?? '?')}, not ${u(p.stops ?? '?')}`;
  if (p.kind === 'repeated') return (p.values ?? []).map(u).join(', ');
  return u(p.value ?? '?');
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** The column choices start open when a field every row needs has no column. */
function needsMapping(result: ReadingImportResponse): boolean {
  const m = result.mapping;
  return m.name === null || m.instrument === null || m.at_s === null || (m.value === null && m.passes === null && m.values === null);
}

/**
 * "Import from CSV…": choose a file, check how its columns map to reading fields and what each row
 * would log, then store them all at once; nothing is stored while any row is refused.
 */
export function ReadingImportDialog({ buildId }: { buildId: number }) {
  const [open, setOpen] = useState(false);
  const [file, setFile] = useState<{ name: string; csv: string } | null>(null);
  const [choices, setChoices] = useState<MappingChoices>({});
  const [fileError, setFileError] = useState<string | null>(null);
  const [storeError, setStoreError] = useState<string | null>(null);
  // Opened by itself when a needed field has no column; never closed under the builder's hand.
  const [mappingOpen, setMappingOpen] = useState(false);
  const preview = useImportPreview(buildId);
  const store = useImportReadings(buildId);
  const { toast } = useToast();
  const result: ReadingImportResponse | undefined = preview.data;

  function reset() {
    setFile(null);
    setChoices({});
    setFileError(null);
    setStoreError(null);
    setMappingOpen(false);
    preview.reset();
    store.reset();
  }

  function ask(csv: string, mapping: MappingChoices) {
    setStoreError(null);
    preview.mutate({ csv, mapping }, { onSuccess: (checked) => needsMapping(checked) && setMappingOpen(true) });
  }

  function choose(e: ChangeEvent<HTMLInputElement>) {
    const chosen = e.target.files?.[0];
    reset();
    if (!chosen) return;
    if (chosen.size > MAX_IMPORT_CSV_CHARS) {
      setFileError(`“${chosen.name}” is larger than 5 MB. Split it into smaller files and import each.`);
      return;
    }
    const reader = new FileReader();
    reader.onload = () => {
      const csv = typeof reader.result === 'string' ? reader.result : '';
      if (csv.length > MAX_IMPORT_CSV_CHARS) {
        setFileError(`“${chosen.name}” is larger than 5 MB. Split it into smaller files and import each.`);
        return;
      }
      setFile({ name: chosen.name, csv });
      ask(csv, {});
    };
    reader.onerror = () => setFileError(`“${chosen.name}” could not be read. Choose it again, or save it from the spreadsheet again.`);
    reader.readAsText(chosen);
  }

  function remap(field: ImportField, column: string) {
    if (!file) return;
    const next = { ...choices, [field]: column === '' ? null : column };
    setChoices(next);
    ask(file.csv, next);
  }

  function importAll() {
    if (!file || !result) return;
    store.mutate(
      { csv: file.csv, mapping: choices },
      {
        onSuccess: (done) => {
          toast({
            tone: 'success',
            title: `${plural(done.counts.new, 'reading')} imported`,
            description:
              done.counts.unchanged > 0
                ? `From “${file.name}”. ${plural(done.counts.unchanged, 'row was', 'rows were')} already logged and left as they were.`
                : `From “${file.name}”.`,
          });
          setOpen(false);
          reset();
        },
        onError: (e) => {
          // Something changed since the preview: show the rows again, with what stops them now.
          if (e instanceof ApiError && e.status === 422) {
            setStoreError('Nothing was imported: some rows are refused now. The table shows why.');
            preview.mutate({ csv: file.csv, mapping: choices });
          } else setStoreError(`Nothing was imported. ${errorMessage(e)}`);
        },
      },
    );
  }

  const rows = result ? [...result.rows].sort((a, b) => statusOrder[a.status] - statusOrder[b.status] || a.line - b.line) : [];
  const ready = result !== undefined && !preview.isPending && result.counts.refused === 0 && result.counts.new > 0;

  return (
    <Dialog
      open={open}
      onOpenChange={(next) => {
        setOpen(next);
        if (!next) reset();
      }}
    >
      <DialogTrigger asChild>
        <Button size="sm" variant="quiet" data-print="hide">
          Import from CSV…
        </Button>
      </DialogTrigger>
      <RadixDialog.Portal>
        <RadixDialog.Overlay className="fixed inset-0 z-40 bg-ink/35" />
        <RadixDialog.Content
          className="fixed top-1/2 left-1/2 z-50 flex w-[min(64rem,calc(100vw-2rem))] max-h-[calc(100dvh-2rem)] -translate-x-1/2 -translate-y-1/2 flex-col gap-4 overflow-auto rounded-lg border border-line bg-paper p-5 shadow-raised"
          data-testid="reading-import-dialog"
        >
          <div>
            <RadixDialog.Title className="text-lg font-semibold">Import readings from a CSV file</RadixDialog.Title>
            <RadixDialog.Description className="mt-1 text-sm text-ink-muted">
              A sheet from a spreadsheet or an instrument’s data logger, or this build’s own export. Each row is checked as if you logged it by
              hand; nothing is stored until every row can be.
            </RadixDialog.Description>
          </div>

          <Field
            label="CSV file"
            hint="Up to 5 MB. Columns are matched by their headings; a row needs a name, its figure, the instrument’s name and the time in the clip."
            error={fileError}
          >
            <Input type="file" accept=".csv,text/csv" className="h-auto py-1.5" onChange={choose} />
          </Field>

          {preview.isError && (
            <p role="alert" className="rounded-md border border-danger/50 bg-danger-wash px-3 py-2 text-sm text-danger">
              The file could not be checked. {errorMessage(preview.error)}
            </p>
          )}
          {preview.isPending && <p className="text-sm text-ink-muted" role="status">Checking every row…</p>}

          {result && file && (
            <>
              <p className="text-sm" aria-live="polite" data-testid="reading-import-counts">
                <strong>{plural(result.counts.new, 'new reading')}</strong>, {result.counts.unchanged} already logged,{' '}
                <strong className={cn(result.counts.refused > 0 && 'text-danger')}>{plural(result.counts.refused, 'row')} refused</strong>.
                {result.counts.refused > 0 && ' Correct the refused rows in the file (or the column choices below), then choose it again.'}
                {result.counts.refused === 0 && result.counts.new === 0 && ' There is nothing new to import.'}
              </p>

              <Table caption={`Rows of “${file.name}”, refused rows first`} captionHidden maxHeight="40vh">
                <THead>
                  <Tr>
                    <Th numeric>Line</Th>
                    <Th>Status</Th>
                    <Th>Key</Th>
                    <Th>Name</Th>
                    <Th numeric>Figures</Th>
                    <Th>Moment</Th>
                  </Tr>
                </THead>
                <TBody>
                  {rows.map((row) => (
                    <Fragment key={row.line}>
                      <Tr className={cn(row.status === 'refused' && 'border-b-0 bg-danger-wash/60')} data-status={row.status} data-line={row.line}>
                        <Td numeric>{row.line}</Td>
                        <Td>
                          <Badge className={cn(row.status === 'refused' && 'border-danger/50 text-danger', row.status === 'new' && 'border-accent/40 text-accent-strong')}>
                            <span aria-hidden="true">{statusWords[row.status].mark}</span>
                            {statusWords[row.status].words}
                          </Badge>
                        </Td>
                        <Td mono className="whitespace-nowrap">{row.key ?? '—'}</Td>
                        <Td>{row.name || '—'}</Td>
                        <Td numeric className="whitespace-nowrap">
                          {figuresOf(row)}
                        </Td>
                        <Td className="whitespace-nowrap">
                          {row.moment ? (
                            <>
                              {row.moment.clipTitle} at <span className="figures">{row.moment.atS.toFixed(3)} s</span>
                              {row.moment.isNew && <span className="text-ink-muted"> (new moment)</span>}
                            </>
                          ) : (
                            '—'
                          )}
                        </Td>
                      </Tr>
                      {row.problems.length > 0 && (
                        // What to fix, the whole width under its row, so long sentences stay readable.
                        <Tr className="bg-danger-wash/60" data-problems-of={row.line}>
                          <Td />
                          <Td colSpan={5}>
                            <ul className="list-none space-y-0.5 p-0 pb-1 text-danger">
                              {row.problems.map((p) => (
                                <li key={`${p.field}:${p.message}`}>{p.message}</li>
                              ))}
                            </ul>
                          </Td>
                        </Tr>
                      )}
                    </Fragment>
                  ))}
                </TBody>
              </Table>
              <details open={mappingOpen} onToggle={(e) => setMappingOpen(e.currentTarget.open)} className="rounded-md border border-rule">
                <summary className="cursor-pointer px-3 py-2 text-sm font-medium">Columns of “{file.name}” and the fields they fill</summary>
                <div className="grid gap-x-3 gap-y-2 px-3 pb-3 sm:grid-cols-2 lg:grid-cols-4">
                  {importFields.map((field) => (
                    <Field key={field} label={importFieldLabels[field]}>
                      <Select size="sm" value={result.mapping[field] ?? ''} onChange={(e) => remap(field, e.target.value)} disabled={preview.isPending}>
                        <option value="">Not in this file</option>
                        {result.columns.map((c) => (
                          <option key={c} value={c}>
                            {c}
                          </option>
                        ))}
                      </Select>
                    </Field>
                  ))}
                </div>
              </details>

            </>
          )}

          {storeError && (
            <p role="alert" className="rounded-md border border-danger/50 bg-danger-wash px-3 py-2 text-sm text-danger">
              {storeError}
            </p>
          )}

          <div className="flex flex-wrap justify-end gap-2">
            <DialogClose asChild>
              <Button variant="quiet">Cancel</Button>
            </DialogClose>
            <Button variant="primary" disabled={!ready} loading={store.isPending} loadingText="Importing…" onClick={importAll}>
              {result && result.counts.new > 0 ? `Import ${plural(result.counts.new, 'reading')}` : 'Import readings'}
            </Button>
          </div>
        </RadixDialog.Content>
      </RadixDialog.Portal>
    </Dialog>
  );
}
