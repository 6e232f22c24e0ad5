/*
 * Every date and time the client shows, in one place. Calendar days ("2026-11-20": a work date,
 * a day a reading was taken) are shown as they are, never shifted by the reader's time zone;
 * instants (when something happened) are shown in the reader's time zone. Times are 24-hour.
 */

const formats = {
  /** "20 Nov 2026": a calendar day. */
  day: new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' }),
  /** "20 November 2026": a calendar day, in full. */
  longDay: new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' }),
  /** "20 Nov 2026": an instant's day in the reader's time zone. */
  instantDay: new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric' }),
  /** "2 Dec": an instant's day without its year. */
  dayMonth: new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short' }),
  /** The locale's medium day ("Nov 20, 2026" in US English). */
  mediumDay: new Intl.DateTimeFormat(undefined, { dateStyle: 'medium' }),
  /** "14:05". */
  clock: new Intl.DateTimeFormat(undefined, { hour: '2-digit', minute: '2-digit', hourCycle: 'h23' }),
  /** Medium day and time to the minute. */
  exact: new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short', hourCycle: 'h23' }),
  /** Medium day and time to the second. */
  exactSeconds: new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'medium', hourCycle: 'h23' }),
  /** "2026-11-20": the day in ISO order, for tables that sort by it. */
  isoDay: new Intl.DateTimeFormat('en-CA', { year: 'numeric', month: '2-digit', day: '2-digit' }),
  /** "14:05" in ISO order, beside isoDay. */
  isoClock: new Intl.DateTimeFormat('en-GB', { hour: '2-digit', minute: '2-digit' }),
} as const;

/** An instant's text in one of the formats, or the text itself when it is not a date. */
function instant(iso: string, format: Intl.DateTimeFormat): string {
  const at = new Date(iso);
  return Number.isNaN(at.getTime()) ? iso : format.format(at);
}

/** A calendar day ("2026-11-20") as "20 Nov 2026", never shifted by the reader's time zone. */
export function dayText(isoDay: string): string {
  const at = new Date(`${isoDay.slice(0, 10)}T00:00:00Z`);
  return Number.isNaN(at.getTime()) ? isoDay : formats.day.format(at);
}

/** A calendar day ("2026-11-20") as "20 November 2026". */
export function longDayText(isoDay: string): string {
  const at = new Date(`${isoDay.slice(0, 10)}T00:00:00Z`);
  return Number.isNaN(at.getTime()) ? isoDay : formats.longDay.format(at);
}

/** An instant ("2026-11-20T14:05:00Z") as its day in the reader's time zone: "20 Nov 2026". */
export function instantDay(iso: string): string {
  return instant(iso, formats.instantDay);
}

/** An instant's day in the locale's medium style. */
export function mediumDay(iso: string): string {
  return instant(iso, formats.mediumDay);
}

/** "14:05" in the reader's time zone. */
export function clockTime(iso: string): string {
  return instant(iso, formats.clock);
}

/** Day and time to the minute in the reader's time zone ("12 Nov 2026, 14:05" in British English). */
export function exactTime(iso: string): string {
  return instant(iso, formats.exact);
}

/** Day and time to the second in the reader's time zone. */
export function exactTimeSeconds(iso: string): string {
  return instant(iso, formats.exactSeconds);
}

/** "2026-11-20 14:05" in the reader's time zone, for tables. */
export function isoDayAndClock(iso: string): string {
  const at = new Date(iso);
  return Number.isNaN(at.getTime()) ? iso : `${formats.isoDay.format(at)} ${formats.isoClock.format(at)}`;
}

/** "2026-11-20" in the reader's time zone, for tables. */
export function isoDayOf(iso: string): string {
  return instant(iso, formats.isoDay);
}

/** "14:05" today, "2 Dec, 14:02" on another day (in the reader's time zone). */
export function sinceText(iso: string, now = new Date()): string {
  const at = new Date(iso);
  if (Number.isNaN(at.getTime())) return iso;
  const sameDay = at.toDateString() === now.toDateString();
  return sameDay ? formats.clock.format(at) : `${formats.dayMonth.format(at)}, ${formats.clock.format(at)}`;
}

/** The machine-readable value for a <time> element. */
export function dateTimeAttr(iso: string): string {
  return iso.length === 10 ? iso : new Date(iso).toISOString();
}
