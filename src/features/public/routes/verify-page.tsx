import { useQuery } from '@tanstack/react-query';
import { data, Link, useLocation, useParams, type Params } from 'react-router-dom';
import type { PartSheet, VerifySheet } from '@shared/public/sheet.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { CalibrationBadge } from '@/features/instruments/components/calibration-badge';
import { ApiError } from '@/lib/api';
import { positiveIntParam } from '@/lib/route-params';
import { publicQueries } from '../api/public-queries';
import { instantDay } from '../lib/dates';

/** The address's partId, read as the server's `partParamsSchema` reads it; 404 when it is not one. */
function partIdFrom(params: Params): number {
  const partId = positiveIntParam(params.partId);
  if (partId === null) throw data(null, { status: 404 });
  return partId;
}

/** Only the sheet's own `story` and `rev` pairs are passed on. */
function printedQuery(search: string): string {
  const from = new URLSearchParams(search);
  const out = new URLSearchParams();
  for (const s of from.getAll('story')) out.append('story', s);
  for (const r of from.getAll('rev')) out.append('rev', r);
  return out.toString();
}

/**
 * What a printed inspection sheet's QR code opens: the part's figures read from the database now,
 * and whether the sheet is still the current revision. Without the sheet's entries in the address
 * it checks the sheet as it would print today.
 */
export function Component() {
  const partId = partIdFrom(useParams());
  const location = useLocation();
  const printed = printedQuery(location.search);
  const sheet = useQuery({ ...publicQueries.sheet(partId), enabled: printed === '' });
  const fromSheet = sheet.data ? printedQuery(new URL(sheet.data.verifyUrl, window.location.origin).search) : '';
  const search = printed || fromSheet;
  const verify = useQuery({ ...publicQueries.verify(partId, search), enabled: search !== '' });

  const failed = sheet.error ?? verify.error;
  if (failed) {
    const missing = failed instanceof ApiError && failed.status === 404;
    return (
      <>
        <PageHeader title="Verify an inspection sheet" />
        <ErrorState
          title={missing ? 'No public figures for this part' : 'The figures could not be checked'}
          error={failed}
          whatToDo={
            missing
              ? 'The part has no published entry with a reading on it, or the entries printed on the sheet are not public any more. Ask the builder for a current sheet.'
              : 'Try again in a moment. If the address came from a QR code, check that it was read in full.'
          }
          onRetry={() => void (sheet.error ? sheet.refetch() : verify.refetch())}
        />
      </>
    );
  }
  if (!verify.data) return <LoadingState label="Reading the part’s figures from the database…" />;
  return <Verified result={verify.data} />;
}

function Verified({ result }: { result: VerifySheet }) {
  const sheet = result.sheet;
  const title = sheet ? `${sheet.part.name}, serial ${sheet.part.serial}` : 'Inspection sheet';
  return (
    <>
      <PageHeader
        eyebrow="Verify an inspection sheet"
        title={title}
        documentTitle={`Verify ${title}`}
        description={sheet ? <>{sheet.build.title} · {sheet.builder.displayName}{sheet.builder.shop ? `, ${sheet.builder.shop}` : ''}</> : undefined}
      />
      <div
        role="status"
        data-verify={result.current ? 'current' : 'outdated'}
        className={
          result.current
            ? 'mb-6 flex items-start gap-3 rounded-lg border-2 border-verdict-conforms bg-paper p-4'
            : 'mb-6 flex items-start gap-3 rounded-lg border-2 border-danger bg-danger-wash/50 p-4'
        }
      >
        <VerdictBadge verdict={result.current ? 'conforms' : 'does-not-conform'}>{result.current ? 'Current' : 'Not current'}</VerdictBadge>
        <div>
          <p className="text-md font-semibold">
            {result.current ? 'This sheet is the current revision.' : result.entries.some((e) => e.currentRevision === null) ? 'An entry on this sheet is no longer public.' : 'A newer revision exists.'}
          </p>
          <p className="text-sm text-ink-muted">
            Read from the database on {instantDay(result.checkedAt)} at {new Date(result.checkedAt).toLocaleTimeString()}.{' '}
            {result.current
              ? 'The figures below are the ones the sheet should show.'
              : 'Trust the figures below, not the paper: they are the current published ones.'}
          </p>
        </div>
      </div>

      <section aria-labelledby="entries-heading" className="mb-8">
        <h2 id="entries-heading" className="mb-2 text-md font-semibold">
          Entries on the sheet
        </h2>
        <ul className="flex flex-col gap-1 text-sm">
          {result.entries.map((e) => (
            <li key={e.storyId}>
              <Link to={`/stories/${e.storyId}`}>Entry {e.storyId}</Link>: printed from revision {e.printedRevision};{' '}
              {e.currentRevision === null ? (
                <strong>withdrawn, no longer public</strong>
              ) : e.current ? (
                'still the current revision'
              ) : (
                <strong>revision {e.currentRevision} is current now</strong>
              )}
            </li>
          ))}
        </ul>
      </section>

      {sheet ? <SheetFigures sheet={sheet} /> : <p className="text-sm text-ink-muted">None of the printed entries is public any more, so there are no figures to show.</p>}
    </>
  );
}

function SheetFigures({ sheet }: { sheet: PartSheet }) {
  return (
    <div className="flex flex-col gap-8">
      <section aria-labelledby="figures-heading" className="flex flex-col gap-3">
        <h2 id="figures-heading" className="text-md font-semibold">
          Checked clearances now
        </h2>
        <Table caption="Checked clearances of the part, as published now" captionHidden maxHeight="none">
          <THead>
            <Tr>
              <Th>Clearance</Th>
              <Th numeric>Value ± U</Th>
              <Th>Verdict</Th>
              <Th>Spec and source</Th>
              <Th>Checked</Th>
            </Tr>
          </THead>
          <TBody>
            {sheet.clearances.map((c) => (
              <Tr key={`${c.storyId}:${c.key}`}>
                <Td>
                  <span className="font-medium">{c.name}</span>
                  <span className="block text-xs text-ink-muted">
                    {c.readings.map((r) => `${r.name} ${r.display}`).join(' · ')}
                  </span>
                </Td>
                <Td numeric className="whitespace-nowrap">
                  {c.display}
                </Td>
                <Td>
                  {c.verdict ? <VerdictBadge verdict={c.verdict} size="sm" rule={c.rule ? `${c.rule} rule` : undefined} /> : <span className="text-xs">{c.verdictWords}</span>}
                </Td>
                <Td className="text-xs">{c.spec ? `${c.spec.name} v${c.spec.version}: ${c.spec.sourceText}` : 'no spec'}</Td>
                <Td className="text-xs">
                  {c.checkedBy}, {instantDay(c.checkedAt)}
                </Td>
              </Tr>
            ))}
          </TBody>
        </Table>
      </section>
      <section aria-labelledby="instruments-heading">
        <h2 id="instruments-heading" className="mb-2 text-md font-semibold">
          Instruments
        </h2>
        <ul className="flex flex-col gap-1 text-sm">
          {sheet.instruments.map((i) => (
            <li key={i.id} className="flex flex-wrap items-center gap-2">
              {i.name} <CalibrationBadge state={i.calibration} />
            </li>
          ))}
        </ul>
      </section>
      <p className="flex flex-wrap gap-x-4 text-sm">
        <a href={sheet.pdfUrl}>Print a current sheet (PDF)</a>
        <Link to={`/public/builds/${sheet.build.id}`}>The build’s diary</Link>
      </p>
      <p className="max-w-prose text-xs text-ink-muted">{sheet.caution}</p>
    </div>
  );
}
