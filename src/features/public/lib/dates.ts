const dayFormat = new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });
const instantFormat = new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric' });

/** A calendar day ("2026-11-20") as "20 Nov 2026", never shifted by the reader's time zone. */
export function dayText(isoDay: string): string {
  const at = new Date(`${isoDay.slice(0, 10)}T00:00:00Z`);
  return Number.isNaN(at.getTime()) ? isoDay : dayFormat.format(at);
}

/** An instant ("2026-11-20T14:05:00Z") as its day in the reader's time zone. */
export function instantDay(iso: string): string {
  const at = new Date(iso);
  return Number.isNaN(at.getTime()) ? iso : instantFormat.format(at);
}

/** The machine-readable value for a <time> element. */
export function dateTimeAttr(iso: string): string {
  return iso.length === 10 ? iso : new Date(iso).toISOString();
}
