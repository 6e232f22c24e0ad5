import type { BudgetLine } from '@shared/measure/calc.schema';
import { formatUncertaintyIn, plainNumber, uncertaintyDecimals } from '@shared/measure/format-quantity';
import { isAnyUnit, unitTable, type AnyUnit } from '@shared/measure/quantities';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';

/** The mark of a component one instrument brings to several readings. */
export function SharedMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={className ?? 'mt-1 size-3.5 shrink-0 text-accent'} aria-hidden="true">
      <path d="M2 4h6v8H2M8 8h6" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
    </svg>
  );
}

/** A unit's symbol for headers ("" for a ratio); a label that is no unit code is shown as it is. */
function unitSymbol(unit: string): string {
  return isAnyUnit(unit) ? unitTable[unit].symbol : unit;
}

const distributionWords: Record<BudgetLine['distribution'], string> = {
  normal: 'normal',
  rectangular: 'rectangular',
  'student-t': 'Student’s t',
};

/** A figure with two significant digits in a unit that may be a code ("in") or a plain label ("K"). */
function uncertaintyIn(u: number, unit: string): string {
  if (isAnyUnit(unit)) return formatUncertaintyIn(u, unit);
  const text = formatUncertaintyIn(u, '1');
  return unit ? `${text} ${unit}` : text;
}

function twoDigits(x: number): string {
  return x === 0 ? '0' : x.toFixed(uncertaintyDecimals(x));
}

function perUnit(result: AnyUnit, input: string): string {
  const top = unitSymbol(result) || '1';
  const bottom = unitSymbol(input) || '1';
  return top === bottom ? '' : `${top}/${bottom}`;
}

function divisorText(divisor: number | null): string {
  if (divisor === null) return '—';
  if (Math.abs(divisor - Math.sqrt(3)) < 1e-12) return '√3';
  return plainNumber(divisor, 4);
}

/** Plain words for a reader: what each distribution says about where the input lies. */
const readerDistributionWords: Record<BudgetLine['distribution'], string> = {
  normal: 'bell-shaped (normal)',
  rectangular: 'anywhere within its limits (rectangular)',
  'student-t': 'Student’s t (few degrees of freedom)',
};

/** For builders, one reading's line: the distribution and what the stated figure was divided by. */
function readingDistributionText(line: BudgetLine): string {
  const how = line.divisor === null ? 'Type A' : line.divisor === 1 ? '' : `÷ ${divisorText(line.divisor)}`;
  const own = line.instrument ? ' · the instrument’s own, shared by its readings' : '';
  return `${distributionWords[line.distribution]}${how ? `, ${how}` : ''}${own}`;
}

function dofCell(nu: number | null): string {
  return nu === null ? '∞' : plainNumber(nu, 3);
}

function isShared(line: BudgetLine): boolean {
  return Boolean(line.instrument) && line.reading.includes(',');
}

/** A line's share of the variance: a small bar and the figure, never the bar alone. */
function ShareCell({ share }: { share: number }) {
  const pct = share * 100;
  return (
    <span className="flex items-center gap-2">
      <span className="relative h-2 w-16 shrink-0 overflow-hidden rounded-sm border border-line bg-paper" aria-hidden="true">
        <span className="absolute inset-y-0 left-0 bg-ink/70" style={{ width: `${Math.min(100, Math.max(pct > 0 ? 2 : 0, pct))}%` }} />
      </span>
      <span className="figures w-16 text-right whitespace-nowrap">{pct < 0.1 && pct > 0 ? '< 0.1' : pct.toFixed(1)} %</span>
    </span>
  );
}

function SharedNote() {
  return (
    <p className="flex items-start gap-1.5 text-xs text-ink-muted">
      <SharedMark />
      <span>
        One instrument’s error, common to several readings: it enters once, with their sensitivities added (GUM 5.2.2), so it
        cancels in a difference and adds in a sum.
      </span>
    </p>
  );
}

/**
 * The uncertainty budget (GUM 7.2.7): each component, how its standard uncertainty was found, its
 * sensitivity, its contribution to the result and its share of the variance. Lines an instrument
 * shares between readings are marked. `variant="reader"` keeps three columns (source, what it
 * adds, share) for the narrow reader's panel; the builder's variant is the dense table.
 * `variant="reading"` is the narrow table for one reading's own components (the reading form):
 * source with its distribution and divisor, u in the reading's unit (|c·u|), ν and share, so it
 * fits a 23rem column without scrolling sideways.
 */
export function BudgetTable({
  budget,
  unit,
  variant = 'builder',
  caption,
  captionShown = false,
}: {
  budget: readonly BudgetLine[];
  unit: AnyUnit;
  variant?: 'builder' | 'reader' | 'reading';
  /** Names the table for screen readers (each variant has its own default). */
  caption?: string;
  /** Shows the caption above the table instead of keeping it for screen readers. */
  captionShown?: boolean;
}) {
  if (budget.length === 0) {
    return <p className="text-sm text-ink-muted">No uncertainty components: every input is exact.</p>;
  }
  const resultSymbol = unitSymbol(unit);
  const sorted = [...budget].sort((a, b) => b.share - a.share);
  const anyShared = sorted.some(isShared);
  if (variant === 'reader' || variant === 'reading') {
    const forReading = variant === 'reading';
    return (
      <div className="space-y-2">
        <Table
          caption={caption ?? (forReading ? 'What this reading’s standard uncertainty is made of, largest share first' : 'What the uncertainty is made of, largest share first')}
          captionHidden={!captionShown}
          maxHeight="none"
          className="text-xs"
        >
          <THead>
            <Tr>
              <Th className="px-2.5">Source</Th>
              <Th numeric className="px-2.5 whitespace-nowrap">
                {forReading ? (
                  <abbr title="standard uncertainty" className="normal-case no-underline">
                    u
                  </abbr>
                ) : (
                  'Adds'
                )}
                {resultSymbol && <span className="normal-case"> ({resultSymbol})</span>}
              </Th>
              {forReading && (
                <Th numeric className="px-2.5">
                  <abbr title="degrees of freedom" className="normal-case no-underline">ν</abbr>
                </Th>
              )}
              <Th numeric className="px-2.5">Share</Th>
            </Tr>
          </THead>
          <TBody>
            {sorted.map((line, i) => {
              const shared = isShared(line);
              const pct = line.share * 100;
              return (
                <Tr key={`${line.source}-${i}`} data-shared={shared || undefined}>
                  <th scope="row" className="px-2.5 py-2 text-left align-top font-normal">
                    <span className="flex items-start gap-1.5">
                      {shared && <SharedMark />}
                      <span className="min-w-0 grow">
                        <span className="block text-sm leading-snug text-ink">{line.source}</span>
                        <span className="block text-ink-muted">
                          {forReading ? readingDistributionText(line) : readerDistributionWords[line.distribution]}
                          {shared && ` · shared by ${line.reading}, counted once`}
                        </span>
                        <span className="mt-1.5 block h-1.5 w-full overflow-hidden rounded-sm bg-rule/60" aria-hidden="true">
                          <span className="block h-full bg-ink/70" style={{ width: `${Math.min(100, Math.max(pct > 0 ? 1 : 0, pct))}%` }} />
                        </span>
                      </span>
                    </span>
                  </th>
                  <Td numeric className="px-2.5 py-2 align-top whitespace-nowrap">
                    {twoDigits(Math.abs(line.contribution))}
                  </Td>
                  {forReading && (
                    <Td numeric className="px-2.5 py-2 align-top whitespace-nowrap">
                      {dofCell(line.degreesOfFreedom)}
                    </Td>
                  )}
                  <Td numeric className="px-2.5 py-2 align-top whitespace-nowrap">
                    {pct < 0.1 && pct > 0 ? '< 0.1' : pct.toFixed(1)} %
                  </Td>
                </Tr>
              );
            })}
          </TBody>
        </Table>
        {anyShared && <SharedNote />}
      </div>
    );
  }
  return (
    <div className="space-y-2">
      <Table caption={caption ?? 'Uncertainty budget, largest share first'} captionHidden={!captionShown} maxHeight="28rem" className="text-xs sm:text-sm">
        <THead>
          <Tr>
            <Th>Source</Th>
            <Th className="whitespace-nowrap">Distribution</Th>
            <Th numeric>Divisor</Th>
            <Th numeric className="whitespace-nowrap">
              Std. uncertainty <span className="normal-case">u</span>
            </Th>
            <Th numeric className="whitespace-nowrap">
              Sensitivity <span className="normal-case">c</span>
            </Th>
            <Th numeric className="whitespace-nowrap">
              Contribution <span className="normal-case">|c·u|{resultSymbol && `, ${resultSymbol}`}</span>
            </Th>
            <Th numeric>
              <abbr title="degrees of freedom" className="normal-case no-underline">ν</abbr>
            </Th>
            <Th className="whitespace-nowrap">Share of variance</Th>
          </Tr>
        </THead>
        <TBody>
          {sorted.map((line, i) => {
            const shared = isShared(line);
            return (
              <Tr key={`${line.source}-${i}`} data-shared={shared || undefined}>
                <th scope="row" className="min-w-48 px-3 py-1.5 text-left align-middle font-normal">
                  <span className="flex items-start gap-1.5">
                    {shared && <SharedMark />}
                    <span>
                      {line.source}
                      {shared && (
                        <span className="block text-xs text-ink-muted">
                          shared by {line.reading} ({line.instrument}): counted once
                        </span>
                      )}
                      {!shared && line.instrument && <span className="block text-xs text-ink-muted">instrument {line.instrument}</span>}
                    </span>
                  </span>
                </th>
                <Td className="whitespace-nowrap">{distributionWords[line.distribution]}</Td>
                <Td numeric>{divisorText(line.divisor)}</Td>
                <Td numeric className="whitespace-nowrap">
                  {uncertaintyIn(line.standardUncertainty, line.inputUnit)}
                </Td>
                <Td numeric className="whitespace-nowrap">
                  {plainNumber(line.sensitivity, 4)}
                  {perUnit(unit, line.inputUnit) && <span className="ml-1 text-ink-muted">{perUnit(unit, line.inputUnit)}</span>}
                </Td>
                <Td numeric className="whitespace-nowrap">
                  {twoDigits(Math.abs(line.contribution))}
                </Td>
                <Td numeric>{dofCell(line.degreesOfFreedom)}</Td>
                <Td>
                  <ShareCell share={line.share} />
                </Td>
              </Tr>
            );
          })}
        </TBody>
      </Table>
      <p className="text-xs text-ink-muted sm:hidden">The table scrolls sideways: each line&rsquo;s contribution and share of the variance are on the right.</p>
      {anyShared && <SharedNote />}
    </div>
  );
}
