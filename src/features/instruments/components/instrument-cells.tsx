import type { Instrument } from '@shared/instruments/instrument.schema';
import { signedWithUnit, withUnit } from '../lib/instrument-format';

/** Stated standard uncertainty, or the words saying the engine takes it from the resolution. */
export function UncertaintyText({ instrument }: { instrument: Instrument }) {
  if (instrument.statedUncertainty === null) return <span className="font-sans text-ink-muted">from resolution</span>;
  return <>{withUnit(instrument.statedUncertainty, instrument.unit)}</>;
}

/** The latest zero check: its day and offset; or why there is none. */
export function ZeroCheckText({ instrument }: { instrument: Instrument }) {
  const latest = instrument.latestZeroCheck;
  if (!instrument.needsZeroCheck && !latest) return <span className="whitespace-nowrap text-ink-muted">no zero to check</span>;
  if (!latest) return <span className="whitespace-nowrap text-ink-muted">none yet</span>;
  return (
    <span className="figures inline-block whitespace-nowrap">
      <span title="offset: shown − standard">{signedWithUnit(latest.offset, latest.unit)}</span>
      <span className="block text-xs text-ink-muted">
        <span className="sr-only">checked on </span>
        <time dateTime={latest.checkedOn}>{latest.checkedOn}</time>
      </span>
    </span>
  );
}

/** The warning line an overdue instrument carries. */
export function OverdueLine({ instrument, className }: { instrument: Instrument; className?: string }) {
  if (instrument.calibrationState !== 'overdue' || !instrument.calibrationDueOn) return null;
  return (
    <p className={className ?? 'mt-1 max-w-44 text-xs text-danger'}>
      Readings taken with it after <span className="figures whitespace-nowrap">{instrument.calibrationDueOn}</span> carry a calibration warning.
    </p>
  );
}
