import { decisionRuleText } from '@shared/measure/spec';
import { unitTable } from '@shared/measure/quantities';
import type { SpecVersion } from '@shared/specs/spec-library.schema';
import { BandPicture } from '@/features/calc/components/band-picture';
import { Badge } from '@/components/ui/badge';
import { cn } from '@/lib/cn';
import { bandOf, bandSummary, dayOf, isInventedForDemo, isLengthVersion, specSourceKindNames } from '../lib/spec-format';

/** One version: its figures, rule, source, note and date, and the band drawn alone. */
export function SpecVersionCard({ version, latest }: { version: SpecVersion; latest: boolean }) {
  // The band is drawn for lengths (stored in picometres); other quantities say it in words.
  const picture = isLengthVersion(version) ? { unit: version.unit, ...bandOf(version) } : null;
  const headingId = `spec-version-${version.id}`;
  const hasBand = picture !== null && (picture.band.minPm !== undefined || picture.band.maxPm !== undefined);
  return (
    <article aria-labelledby={headingId} className="rounded-lg border border-rule bg-paper" data-spec-version={version.version}>
      <header className="flex flex-wrap items-center gap-2 border-b border-rule px-4 py-2.5">
        <h3 id={headingId} className="text-md font-semibold">
          Version {version.version}
        </h3>
        {latest && <Badge tone="strong">latest</Badge>}
        <span className="text-sm text-ink-muted">
          saved <time dateTime={version.createdAt} className="figures">{dayOf(version.createdAt)}</time>
        </span>
        {isInventedForDemo(version) && <Badge>figures invented for the demo</Badge>}
      </header>
      <div className={cn('grid gap-4 p-4', picture && 'lg:grid-cols-[minmax(0,1fr)_minmax(0,22rem)]')}>
        <dl className="grid gap-x-4 gap-y-2 text-sm sm:grid-cols-[max-content_minmax(0,1fr)]">
          <dt className="text-ink-muted">Band</dt>
          <dd className="figures">{bandSummary(version)}</dd>
          <dt className="text-ink-muted">Unit</dt>
          <dd>{unitTable[version.unit].name}</dd>
          <dt className="text-ink-muted">Decision rule</dt>
          <dd>
            <span className="font-medium">{version.rule === 'guarded' ? 'Guarded' : 'Simple'}</span>
            <span className="block text-xs text-ink-muted">{decisionRuleText[version.rule]}</span>
          </dd>
          <dt className="text-ink-muted">Source</dt>
          <dd>
            <span className="font-medium">{specSourceKindNames[version.source.kind]}</span>
            <span className="block">{version.source.text}</span>
          </dd>
          <dt className="text-ink-muted">Note</dt>
          <dd className={version.note ? 'whitespace-pre-line' : 'text-ink-muted'}>{version.note || 'none'}</dd>
        </dl>
        {picture && (
          <div>
            {hasBand ? (
              <BandPicture unit={picture.unit} decimals={picture.decimals} band={picture.band} preferred={picture.preferred} rejectPm={picture.rejectPm} />
            ) : (
              <p className="text-sm text-ink-muted">This version has no band to draw.</p>
            )}
          </div>
        )}
      </div>
    </article>
  );
}
