import { lazy, Suspense } from 'react';
import { useSuspenseQuery } from '@tanstack/react-query';
import { data, Link, useParams, type LoaderFunctionArgs, type Params } from 'react-router-dom';
import type { PublicBuild, PublicClearanceFigure, PublicClearanceSummary } from '@shared/public/public-build.schema';
import type { UnitSystem } from '@shared/measure/format';
import { VerdictBadge } from '@/components/ui/badge';
import { EmptyState } from '@/components/ui/data-states';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { ApiError } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { positiveIntParam } from '@/lib/route-params';
import { publicQueries } from '../api/public-queries';
import { ShareMeta } from '../components/share-meta';
import { UnitsSwitch } from '../components/units-switch';
import { dateTimeAttr, dayText, instantDay } from '@/lib/dates';
import { resultShown, shownText } from '../lib/figures';
import { entryUnitOf } from '../lib/unit-choice';
import { useUnitSystem } from '../lib/units';

const BeforeAfterChart = lazy(() => import('../components/before-after-chart').then((m) => ({ default: m.BeforeAfterChart })));

/** The address's buildId, read as the server's `publicBuildParamsSchema` reads it; 404 when it is not one. */
function buildIdFrom(params: Params): number {
  const buildId = positiveIntParam(params.buildId);
  if (buildId === null) throw data(null, { status: 404 });
  return buildId;
}

export async function loader({ params }: LoaderFunctionArgs) {
  const buildId = buildIdFrom(params);
  try {
    await queryClient.ensureQueryData(publicQueries.build(buildId));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

/** A build as readers see it: its diary entries in order, its parts with their sheets, and every checked clearance across entries. */
export function Component() {
  const buildId = buildIdFrom(useParams());
  const { data: build } = useSuspenseQuery(publicQueries.build(buildId));
  const units = useUnitSystem(entryUnitOf(build.clearances.map((c) => c.unit)));
  const changed = build.clearances.filter((c) => c.entries.length >= 2 && (c.first.valueUm !== c.latest.valueUm || c.first.value !== c.latest.value));

  return (
    <>
      <ShareMeta title={build.title} description={build.subject} path={`/public/builds/${build.id}`} imagePath={build.entries[0]?.coverUrl} type="website" />
      <header className="mb-8 max-w-3xl">
        <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">Build stories</p>
        <h1 className="mt-1 font-serif text-2xl leading-tight font-bold tracking-tight">{build.title}</h1>
        <p className="mt-2 font-serif text-story text-ink-muted">{build.subject}</p>
        <p className="mt-3 text-sm">
          By{' '}
          <Link to={`/builders/${encodeURIComponent(build.builder.login)}`} className="font-semibold">
            {build.builder.displayName}
          </Link>
          {build.builder.shop && <span className="text-ink-muted">, {build.builder.shop}</span>}
        </p>
      </header>

      <div className="grid gap-10 lg:grid-cols-[minmax(0,1fr)_20rem]">
        <section aria-labelledby="entries-heading">
          <h2 id="entries-heading" className="mb-3 text-lg font-semibold">
            Stories
          </h2>
          {build.entries.length === 0 ? (
            <EmptyState title="No public stories">This build has no published story at the moment.</EmptyState>
          ) : (
            <ol className="relative flex flex-col gap-5 border-l-2 border-rule pl-5">
              {build.entries.map((entry, index) => (
                <li key={entry.storyId} className="relative" data-entry={entry.storyId}>
                  <span className="absolute top-1.5 -left-[1.72rem] size-3 rounded-full border-2 border-ink bg-paper" aria-hidden="true" />
                  <p className="figures text-xs text-ink-muted">
                    {index + 1}. <time dateTime={dateTimeAttr(entry.workDate ?? entry.publishedAt)}>{entry.workDate ? dayText(entry.workDate) : `published ${instantDay(entry.publishedAt)}`}</time>
                    {entry.revision > 1 && ` · revision ${entry.revision}`}
                  </p>
                  <div className="mt-1 flex gap-4">
                    {entry.coverUrl && <img src={entry.coverUrl} alt="" loading="lazy" className="hidden aspect-video w-36 shrink-0 rounded-sm border border-rule object-cover sm:block" />}
                    <div className="min-w-0">
                      <h3 className="font-serif text-md font-bold">
                        <Link to={`/stories/${entry.storyId}`} className="text-ink">
                          {entry.title}
                        </Link>
                      </h3>
                      {entry.summary && <p className="text-sm text-ink-muted">{entry.summary}</p>}
                    </div>
                  </div>
                </li>
              ))}
            </ol>
          )}
        </section>

        <PartsList build={build} />
      </div>

      <section aria-labelledby="clearances-heading" className="mt-12 flex flex-col gap-4">
        <div className="flex flex-wrap items-end justify-between gap-3">
          <div>
            <h2 id="clearances-heading" className="text-lg font-semibold">
              Every checked clearance
            </h2>
            <p className="text-sm text-ink-muted">The first and the latest figure of each clearance across the stories, as published and checked.</p>
          </div>
          <UnitsSwitch choice={units} />
        </div>
        {build.clearances.length === 0 ? (
          <EmptyState title="No clearances published">The public stories of this build claim readings only, no clearances.</EmptyState>
        ) : (
          <ClearanceSummaryTable clearances={build.clearances} entries={build.entries} system={units.system} />
        )}
        {changed.length > 0 && (
          <Suspense fallback={null}>
            <div className="grid gap-4 md:grid-cols-2">
              {changed.map((c) => (
                <BeforeAfterChart
                  key={c.key}
                  title={`${c.name}: story by story`}
                  band={null}
                  system={units.system}
                  points={c.entries.map((e) => ({
                    id: `${e.storyId}:${e.revision}`,
                    label: e.storyTitle,
                    detail: e.workDate ? dayText(e.workDate) : undefined,
                    shown: figureShown(c, e),
                    verdict: e.verdict,
                  }))}
                />
              ))}
            </div>
          </Suspense>
        )}
        <p className="text-xs text-ink-muted">
          These are the builder’s own figures. Follow the manufacturer’s manual, local rules and qualified practice; engine and machining
          work can hurt people.
        </p>
      </section>
    </>
  );
}

function PartsList({ build }: { build: PublicBuild }) {
  return (
    <section aria-labelledby="parts-heading">
      <h2 id="parts-heading" className="mb-3 text-lg font-semibold">
        Parts
      </h2>
      {build.parts.length === 0 ? (
        <p className="text-sm text-ink-muted">No parts listed for this build.</p>
      ) : (
        <ul className="flex flex-col gap-3">
          {build.parts.map((part) => (
            <li key={part.id} className="rounded-md border border-rule p-3" data-part={part.serial}>
              <p className="font-medium">{part.name}</p>
              <p className="figures text-sm text-ink-muted">serial {part.serial}</p>
              {part.pdfUrl ? (
                <p className="mt-1.5 flex flex-wrap gap-x-3 text-sm">
                  <a href={part.pdfUrl}>Inspection sheet (PDF)</a>
                  <Link to={`/verify/parts/${part.id}`}>Verify the figures</Link>
                </p>
              ) : (
                <p className="mt-1.5 text-xs text-ink-muted">No public reading on this part yet, so no inspection sheet.</p>
              )}
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}

/** One entry's figure of a summarised result: a length by its µm figures, any other quantity in the summary's unit. */
function figureShown(c: PublicClearanceSummary, f: PublicClearanceFigure) {
  return resultShown({ quantity: c.quantity, unit: c.unit, valueUm: f.valueUm, expandedUncertaintyUm: f.expandedUncertaintyUm, value: f.value, expandedUncertainty: f.expandedUncertainty, display: f.display });
}

/** "entry 2", linking to the entry, its title on hover and for screen readers. */
function EntryRef({ figure, entries }: { figure: PublicClearanceFigure; entries: PublicBuild['entries'] }) {
  const number = entries.findIndex((e) => e.storyId === figure.storyId) + 1;
  return (
    <span className="block font-sans text-2xs">
      <Link to={`/stories/${figure.storyId}`} title={figure.storyTitle}>
        story {number > 0 ? number : '?'}
        <span className="sr-only">: {figure.storyTitle}</span>
      </Link>
    </span>
  );
}

function ClearanceSummaryTable({
  clearances,
  entries,
  system,
}: {
  clearances: readonly PublicClearanceSummary[];
  entries: PublicBuild['entries'];
  system: UnitSystem;
}) {
  return (
    <Table caption="Checked clearances across the entries: first and latest figures" captionHidden maxHeight="none">
      <THead>
        <Tr>
          <Th>Clearance</Th>
          <Th numeric>First</Th>
          <Th numeric>Latest</Th>
          <Th>Latest verdict</Th>
          <Th>Stories</Th>
        </Tr>
      </THead>
      <TBody>
        {clearances.map((c) => (
          <Tr key={c.key} data-clearance={c.key}>
            <th scope="row" className="px-3 py-1.5 text-left align-middle text-sm font-medium text-ink">
              {c.name}
              {c.latest.spec && <span className="block text-xs font-normal text-ink-muted">{c.latest.spec.name} v{c.latest.spec.version}</span>}
            </th>
            <Td numeric className="whitespace-nowrap">
              {shownText(figureShown(c, c.first), system).main}
              <EntryRef figure={c.first} entries={entries} />
            </Td>
            <Td numeric className="whitespace-nowrap">
              {shownText(figureShown(c, c.latest), system).main}
              {c.entries.length > 1 ? <EntryRef figure={c.latest} entries={entries} /> : <span className="block font-sans text-2xs text-ink-muted">same entry</span>}
            </Td>
            <Td>
              {c.latest.verdict ? (
                <VerdictBadge verdict={c.latest.verdict} size="sm" rule={c.latest.rule ? `${c.latest.rule} rule` : undefined} />
              ) : (
                <span className="text-xs text-ink-muted">no spec</span>
              )}
            </Td>
            <Td className="figures text-xs">{c.entries.length}</Td>
          </Tr>
        ))}
      </TBody>
    </Table>
  );
}
