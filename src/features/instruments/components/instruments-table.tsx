import type { ReactNode } from 'react';
import { instrumentKindNames, type Instrument } from '@shared/instruments/instrument.schema';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { Menu, MenuContent, MenuItem, MenuSeparator, MenuTrigger } from '@/components/ui/menu';
import { Table, TBody, THead, Td, Th, Tr } from '@/components/ui/table';
import { cn } from '@/lib/cn';
import { withUnit } from '../lib/instrument-format';
import { CalibrationBadge } from './calibration-badge';
import { OverdueLine, UncertaintyText, ZeroCheckText } from './instrument-cells';

export interface InstrumentActions {
  onEdit: (instrument: Instrument) => void;
  onZeroCheck: (instrument: Instrument) => void;
  onDelete: (instrument: Instrument) => void;
}

function RowMenu({ instrument, actions }: { instrument: Instrument; actions: InstrumentActions }) {
  return (
    <Menu>
      <MenuTrigger asChild>
        <Button variant="quiet" size="sm" className="px-2" aria-label={`Actions for ${instrument.name}`} title="Edit, log a zero check, delete">
          <svg viewBox="0 0 16 16" className="size-4" aria-hidden="true">
            <circle cx="3.5" cy="8" r="1.3" fill="currentColor" />
            <circle cx="8" cy="8" r="1.3" fill="currentColor" />
            <circle cx="12.5" cy="8" r="1.3" fill="currentColor" />
          </svg>
        </Button>
      </MenuTrigger>
      <MenuContent>
        <MenuItem onSelect={() => actions.onEdit(instrument)}>Edit</MenuItem>
        {instrument.needsZeroCheck && <MenuItem onSelect={() => actions.onZeroCheck(instrument)}>Log a zero check</MenuItem>}
        <MenuSeparator />
        <MenuItem tone="danger" onSelect={() => actions.onDelete(instrument)}>
          Delete…
        </MenuItem>
      </MenuContent>
    </Menu>
  );
}

function Name({ instrument }: { instrument: Instrument }) {
  return (
    <>
      <span className="font-medium">{instrument.name}</span>
      {instrument.retired && (
        <Badge className="ml-1.5 align-middle">
          <svg viewBox="0 0 16 16" className="size-3" aria-hidden="true">
            <path d="M3 8h10" stroke="currentColor" strokeWidth="1.8" />
          </svg>
          Retired
        </Badge>
      )}
    </>
  );
}

function LastCalibrated({ instrument }: { instrument: Instrument }) {
  if (!instrument.lastCalibratedOn) return <span className="text-ink-muted">no record</span>;
  return (
    <>
      <time dateTime={instrument.lastCalibratedOn} className="figures whitespace-nowrap">
        {instrument.lastCalibratedOn}
      </time>
      {instrument.calibratedBy && <span className="block text-xs text-ink-muted">by {instrument.calibratedBy}</span>}
    </>
  );
}

function ZeroCheckCell({ instrument, actions }: { instrument: Instrument; actions: InstrumentActions }) {
  return (
    <div className="flex items-center gap-2">
      <ZeroCheckText instrument={instrument} />
      {instrument.needsZeroCheck && !instrument.retired && (
        <Button variant="secondary" size="sm" className="h-7 px-2 text-xs" onClick={() => actions.onZeroCheck(instrument)} aria-label={`Log a zero check for ${instrument.name}`}>
          Log
        </Button>
      )}
    </div>
  );
}

/** The register as a dense table (wide screens). */
export function InstrumentsTable({ instruments, actions }: { instruments: Instrument[]; actions: InstrumentActions }) {
  return (
    <Table caption="Your instruments" captionHidden maxHeight="none">
      <THead>
        <Tr>
          <Th>Instrument</Th>
          <Th>Serial</Th>
          <Th numeric>Resolution</Th>
          <Th numeric>Uncertainty</Th>
          <Th>Last calibrated</Th>
          <Th>Due</Th>
          <Th>Calibration</Th>
          <Th>Latest zero check</Th>
          <Th className="w-px">
            <span className="sr-only">Actions</span>
          </Th>
        </Tr>
      </THead>
      <TBody>
        {instruments.map((instrument) => (
          <Tr key={instrument.id} data-instrument-id={instrument.id} className={cn(instrument.retired && 'text-ink-muted opacity-70')}>
            <Td className="min-w-40">
              <Name instrument={instrument} />
              <span className="block text-xs text-ink-muted">{instrumentKindNames[instrument.kind]}</span>
            </Td>
            <Td mono className="text-xs whitespace-nowrap">
              {instrument.serial || <span className="font-sans text-ink-muted">none</span>}
            </Td>
            <Td numeric className="whitespace-nowrap">
              {withUnit(instrument.resolution, instrument.unit)}
            </Td>
            <Td numeric className="whitespace-nowrap">
              <UncertaintyText instrument={instrument} />
            </Td>
            <Td className="min-w-36">
              <LastCalibrated instrument={instrument} />
            </Td>
            <Td mono className="whitespace-nowrap">
              {instrument.calibrationDueOn ?? <span className="font-sans text-ink-muted">—</span>}
            </Td>
            <Td className="min-w-40">
              <CalibrationBadge state={instrument.calibrationState} />
              <OverdueLine instrument={instrument} />
            </Td>
            <Td>
              <ZeroCheckCell instrument={instrument} actions={actions} />
            </Td>
            <Td className="w-px text-right">
              <RowMenu instrument={instrument} actions={actions} />
            </Td>
          </Tr>
        ))}
      </TBody>
    </Table>
  );
}

function Pair({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="min-w-0">
      <dt className="text-2xs font-semibold tracking-wide text-ink-muted uppercase">{term}</dt>
      <dd className="text-sm">{children}</dd>
    </div>
  );
}

/** The register as cards (narrow screens), the same facts in the same order. */
export function InstrumentCards({ instruments, actions }: { instruments: Instrument[]; actions: InstrumentActions }) {
  return (
    <ul className="flex flex-col gap-3" aria-label="Your instruments">
      {instruments.map((instrument) => (
        <li key={instrument.id} className={cn('rounded-md border border-rule bg-paper p-3', instrument.retired && 'opacity-70')}>
          <div className="flex items-start justify-between gap-2">
            <div className="min-w-0">
              <h3 className="text-base">
                <Name instrument={instrument} />
              </h3>
              <p className="text-xs text-ink-muted">
                {instrumentKindNames[instrument.kind]}
                {instrument.serial && (
                  <>
                    {' · '}
                    <span className="figures">{instrument.serial}</span>
                  </>
                )}
              </p>
            </div>
            <RowMenu instrument={instrument} actions={actions} />
          </div>
          <div className="mt-2">
            <CalibrationBadge state={instrument.calibrationState} />
            <OverdueLine instrument={instrument} className="mt-1 text-xs text-danger" />
          </div>
          <dl className="mt-2 grid grid-cols-2 gap-x-3 gap-y-2">
            <Pair term="Resolution">
              <span className="figures">{withUnit(instrument.resolution, instrument.unit)}</span>
            </Pair>
            <Pair term="Uncertainty u">
              <span className="figures">
                <UncertaintyText instrument={instrument} />
              </span>
            </Pair>
            <Pair term="Last calibrated">
              <LastCalibrated instrument={instrument} />
            </Pair>
            <Pair term="Due">
              <span className="figures">{instrument.calibrationDueOn ?? '—'}</span>
            </Pair>
            <div className="col-span-2">
              <Pair term="Latest zero check">
                <ZeroCheckCell instrument={instrument} actions={actions} />
              </Pair>
            </div>
          </dl>
        </li>
      ))}
    </ul>
  );
}
