import { Fragment } from 'react';
import { formatCoverageFactor } from '@shared/measure/format-quantity';
import type { UnitSystem } from '@shared/measure/format';
import { cn } from '@/lib/cn';
import { hasUncertainty, shownText, type ShownFigure } from '../lib/figures';

/**
 * A measured figure in the reader's system, in the monospace with tabular digits: a length as
 * value ± U in the main unit with the fine unit beside it below one main unit (in and thou, mm and
 * µm); any other quantity in its own unit or its system's usual one (35 lbf·ft reads 47 N·m in metric).
 */
export function Figure({
  shown,
  system,
  coverageFactor,
  size = 'md',
  className,
}: {
  shown: ShownFigure;
  system: UnitSystem;
  coverageFactor?: number;
  size?: 'sm' | 'md' | 'lg';
  className?: string;
}) {
  const figure = shownText(shown, system);
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
        {coverageFactor !== undefined && hasUncertainty(shown) && <span className="font-normal whitespace-nowrap text-ink-muted">(k = {formatCoverageFactor(coverageFactor)})</span>}
      </span>
      {figure.fine && <span className="figures text-xs text-ink-muted">{figure.fine}</span>}
    </span>
  );
}
