import { Fragment } from 'react';
import { formatCoverageFactor } from '@shared/measure/format-quantity';
import type { UnitSystem } from '@shared/measure/format';
import { cn } from '@/lib/cn';
import { systemFigure } from '../lib/figures';

/**
 * A measured figure in the reader's system: value ± U in the main unit, the fine unit beside it
 * below one main unit (in and thou, mm and µm), in the monospace with tabular digits.
 */
export function Figure({
  valueUm,
  expandedUm,
  system,
  coverageFactor,
  resolutionPm,
  size = 'md',
  className,
}: {
  valueUm: number;
  expandedUm: number;
  system: UnitSystem;
  coverageFactor?: number;
  /** A reading's resolution: the value is shown at it rather than at U's place. */
  resolutionPm?: bigint | null;
  size?: 'sm' | 'md' | 'lg';
  className?: string;
}) {
  const figure = systemFigure(valueUm, expandedUm, system, resolutionPm);
  return (
    <span className={cn('inline-flex flex-wrap items-baseline gap-x-2', className)} data-figure={system}>
      <span className={cn('figures text-ink', size === 'lg' ? 'text-md font-semibold' : size === 'sm' ? 'text-sm' : 'text-base font-medium')}>
        {/* Each piece stays whole when a narrow panel wraps the line. */}
        {/* The spaces between pieces sit outside them, so the line may break there. */}
        {figure.main.split(' ± ').map((piece, index) => (
          <Fragment key={index}>
            {index > 0 && ' '}
            <span className="whitespace-nowrap">
              {index > 0 && '± '}
              {piece}
            </span>
          </Fragment>
        ))}{' '}
        {coverageFactor !== undefined && expandedUm > 0 && <span className="font-normal whitespace-nowrap text-ink-muted">(k = {formatCoverageFactor(coverageFactor)})</span>}
      </span>
      {figure.fine && <span className="figures text-xs text-ink-muted">{figure.fine}</span>}
    </span>
  );
}
