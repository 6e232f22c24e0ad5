import { Fragment } from 'react';
import { useQuery } from '@tanstack/react-query';
import { data, Link, useLocation, useParams, type Params } from 'react-router-dom';
import type { PartSheet, SheetClearance, VerifySheet } from '@shared/public/sheet.schema';
import { Badge, VerdictBadge } from '@/components/ui/badge';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { CalibrationBadge } from '@/features/instruments/components/calibration-badge';
import { ApiError } from '@/lib/api';
import { positiveIntParam } from '@/lib/route-params';
import { publicQueries } from '../api/public-queries';
import { dayText, instantDay } from '@/lib/dates';

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
    // A 400 is the address itself: the server's message says in words what is wrong with it.
    const unreadable = failed instanceof ApiError && failed.status === 400;
    return (
      <>
        <PageHeader title="Verify an inspection sheet" />
        <ErrorState
          title={missing ? 'No public figures for this part' : unreadable ? 'The sheet’s code could not be read' : 'The figures could not be checked'}
          error={failed}
          whatToDo={
            missing ? (
              'The part has no published story with a reading on it, or the stories printed on the sheet are not public any more. Ask the builder for a current sheet.'
            ) : unreadable ? (
              <>
                Scan the QR code again, holding it flat and in full view, or{' '}
                <Link to={`/verify/parts/${partId}`}>open the part’s current sheet</Link>.
              </>
            ) : (
              'Try again in a moment. If the address came from a QR code, check that it was read in full.'
            )
          }
          onRetry={unreadable ? undefined : () => void (sheet.error ? sheet.refetch() : verify.refetch())}
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
            ? 'mb-6 flex flex-wrap items-start gap-3 rounded-lg border-2 border-ink/60 bg-paper p-4'
            : 'mb-6 flex flex-wrap items-start gap-3 rounded-lg border-2 border-danger bg-danger-wash/50 p-4'
        }
      >
        <Badge tone={result.current ? 'strong' : 'neutral'} className={result.current ? undefined : 'border-danger text-danger'}>
          {result.current ? 'Current' : 'Not current'}
        </Badge>
        <div className="min-w-0 flex-1">
          <p className="text-md font-semibold">
            {result.current ? 'This sheet is the current revision.' : result.entries.some((e) => e.currentRevision === null) ? 'A story on this sheet is no longer public.' : 'A newer revision exists.'}
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
          Stories on the sheet
        </h2>
        <ul className="flex flex-col gap-1 text-sm">
          {result.entries.map((e) => (
            <li key={e.storyId} data-entry={e.storyId}>
              {e.title === null ? (
                <>A story no longer public</>
              ) : (
                <Link to={`/stories/${e.storyId}`}>“{e.title}”</Link>
              )}
              : printed from revision {e.printedRevision};{' '}
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

      {sheet ? <SheetFigures sheet={sheet} /> : <p className="text-sm text-ink-muted">None of the printed stories is public any more, so there are no figures to show.</p>}
    </>
  );
}

/** "0.004700 in ± 0.000078 in (95 %, k = 1.90)" in pieces that each stay on one line. */
function figurePieces(display: string): string[] {
  const [value = display, rest] = display.split(' ± ');
  if (rest === undefined) return [value];
  const open = rest.indexOf(' (');
  return open < 0 ? [value, `± ${rest}`] : [value, `± ${rest.slice(0, open)}`, rest.slice(open + 1)];
}

/** "Spec band 0.003–0.005 in · preferred band … · reject limit …", or null without a spec. */
function limitsLine(limits: SheetClearance['limits']): string | null {
  const parts = [limits.band && `Spec band ${limits.band}`, limits.preferred && `preferred band ${limits.preferred}`, limits.reject && `reject limit ${limits.reject}`].filter(Boolean);
  return parts.length ? parts.join(' · ') : null;
}

function SheetFigures({ sheet }: { sheet: PartSheet }) {
  // Clearances when every result is a gap; results when some are not (a torque, a compression ratio).
  const noun = sheet.clearances.every((c) => (c.quantity ?? 'length') === 'length') ? 'clearance' : 'result';
  return (
    <div className="flex flex-col gap-8">
      <section aria-labelledby="figures-heading" className="flex flex-col gap-3">
        <h2 id="figures-heading" className="text-md font-semibold">
          Checked {noun}s now
        </h2>
        <Table caption={`Checked ${noun}s of the part, as published now`} captionHidden maxHeight="none">
          <THead>
            <Tr>
              <Th>{noun === 'clearance' ? 'Clearance' : 'Result'}: value ± U, verdict, spec and readings</Th>
            </Tr>
          </THead>
          <TBody>
            {sheet.clearances.map((c) => (
              <Tr key={`${c.storyId}:${c.key}`} data-clearance={c.key}>
                {/* One cell per clearance, laid out inside: it reads the same on a phone as on paper. */}
                <Td className="py-3 align-top">
                  <div className="grid gap-x-8 gap-y-3 md:grid-cols-[minmax(0,1fr)_minmax(0,1.3fr)]">
                    <div className="flex flex-col items-start gap-1.5">
                      <span className="font-medium">{c.name}</span>
                      <span className="figures text-sm">
                        {figurePieces(c.display).map((piece, index) => (
                          <Fragment key={index}>
                            {index > 0 && ' '}
                            <span className="whitespace-nowrap">{piece}</span>
                          </Fragment>
                        ))}
                      </span>
                      {c.verdict ? <VerdictBadge verdict={c.verdict} size="sm" rule={c.rule ? `${c.rule} rule` : undefined} /> : <span className="text-xs">{c.verdictWords}</span>}
                      {c.limitFacts.length > 0 && (
                        <ul className="flex flex-col gap-0.5 text-xs" aria-label={`${c.name} against the preferred band and the reject limit`}>
                          {c.limitFacts.map((fact) => (
                            <li key={fact} data-limit-fact="">
                              {fact}
                            </li>
                          ))}
                        </ul>
                      )}
                    </div>
                    <div className="flex flex-col gap-1.5 text-xs">
                      {limitsLine(c.limits) && <span className="text-ink">{limitsLine(c.limits)}</span>}
                      <span className="text-ink-muted">{c.spec ? `${c.spec.name}, version ${c.spec.version}: ${c.spec.sourceText}` : 'No spec attached, so no verdict.'}</span>
                      <ul className="flex flex-col gap-1">
                        {c.readings.map((r) => (
                          <li key={r.key} data-sheet-reading={r.key}>
                            {r.name} <span className="figures text-ink">{r.figure}</span>
                            {r.figure !== r.read && <span className="text-ink-muted"> (read {r.read})</span>}
                            <span className="block text-ink-muted">
                              {r.instrumentName}
                              {r.instrumentSerial ? `, serial ${r.instrumentSerial}` : ''}, {dayText(r.takenOn)}
                              {r.zeroOffset ? (
                                <>
                                  ; zero offset <span className="figures">{r.zeroOffset.text}</span> taken off
                                </>
                              ) : r.zeroCheckMissing ? (
                                '; no zero check that day'
                              ) : (
                                ''
                              )}
                            </span>
                          </li>
                        ))}
                      </ul>
                      <span className="text-ink-muted">
                        Checked against the footage by {c.checkedBy}, {instantDay(c.checkedAt)}
                      </span>
                    </div>
                  </div>
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
        <ul className="flex flex-col gap-2 text-sm">
          {sheet.instruments.map((i) => (
            <li key={i.id} data-sheet-instrument={i.id}>
              <span className="flex flex-wrap items-center gap-x-2 gap-y-1">
                <span className="font-medium">{i.name}</span>
                <span className="figures text-xs">{i.serial ? `serial ${i.serial}` : 'no serial recorded'}</span>
                <CalibrationBadge state={i.calibration} />
              </span>
              <span className="block text-xs text-ink-muted">
                {i.calibratedOn ? `Calibrated ${dayText(i.calibratedOn)}` : 'No calibration date recorded'}
                {i.calibratedOn && (i.calibrationDueOn ? `, due ${dayText(i.calibrationDueOn)}` : ', no interval recorded')}
                {i.readingDays.length > 0 && `; used for readings on ${i.readingDays.map(dayText).join(', ')}`}.
              </span>
              {i.warnings.map((w) => (
                <span key={w.message} className="block text-xs text-ink">
                  {w.message}
                </span>
              ))}
            </li>
          ))}
        </ul>
      </section>
      <p className="flex flex-wrap gap-x-4 text-sm">
        <a href={sheet.pdfUrl}>Print a current sheet (PDF)</a>
        <Link to={`/public/builds/${sheet.build.id}`}>The build’s stories</Link>
      </p>
      <p className="max-w-prose text-xs text-ink-muted">{sheet.caution}</p>
    </div>
  );
}
