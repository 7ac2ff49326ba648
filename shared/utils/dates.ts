// Calendar dates as 'YYYY-MM-DD' (21 CFR 801.18 style) and times in the facility's own time zone.

// Building an Intl.DateTimeFormat costs far more than using one (it loads the zone's rules; in a
// browser at page load it is one of the dearest calls), and a trace answer formats a day per row:
// one formatter per zone gives both the day and the time. Few zones ever occur.
const formats = new Map<string, Intl.DateTimeFormat>()

export function partsInZone(instant: Date | string | number, timeZone: string): Record<'year' | 'month' | 'day' | 'hour' | 'minute', string> {
  let f = formats.get(timeZone)
  if (!f) {
    // hourCycle h23: "00:30", never "24:30"; throws for an unknown zone, before anything is cached
    f = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' })
    formats.set(timeZone, f)
  }
  const out = { year: '', month: '', day: '', hour: '', minute: '' }
  for (const p of f.formatToParts(new Date(instant))) if (p.type in out) out[p.type as keyof typeof out] = p.value
  return out
}

/** The calendar day of an instant in a time zone, e.g. ('2026-12-01T23:30:00Z', 'Europe/Berlin') → '2026-12-02'. */
export function dayInZone(instant: Date | string | number, timeZone: string): string {
  const p = partsInZone(instant, timeZone)
  return `${p.year}-${p.month}-${p.day}`
}

/** 'HH:MM' (24 h) of an instant in a time zone. */
export function timeInZone(instant: Date | string | number, timeZone: string): string {
  const p = partsInZone(instant, timeZone)
  return `${p.hour}:${p.minute}`
}

/** 'YYYY-MM-DD HH:MM' in a time zone, for records and lists. */
export function dateTimeInZone(instant: Date | string | number, timeZone: string): string {
  return `${dayInZone(instant, timeZone)} ${timeInZone(instant, timeZone)}`
}

export function isIsoDay(s: string): boolean {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(s)) return false
  const d = new Date(`${s}T00:00:00Z`)
  return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s
}

export function isTimeZone(tz: string): boolean {
  try {
    new Intl.DateTimeFormat('en', { timeZone: tz })
    return true
  } catch {
    return false
  }
}
