// Calendar dates as 'YYYY-MM-DD' (21 CFR 801.18 style) and times in the facility's own time zone.

// Building an Intl.DateTimeFormat costs far more than using one (it loads the zone's rules), and a
// trace answer formats a day per row: keep one formatter per zone and kind. Few zones ever occur.
const dayFormats = new Map<string, Intl.DateTimeFormat>()
const timeFormats = new Map<string, Intl.DateTimeFormat>()

function formatter(cache: Map<string, Intl.DateTimeFormat>, timeZone: string, make: () => Intl.DateTimeFormat): Intl.DateTimeFormat {
  let f = cache.get(timeZone)
  if (!f) {
    f = make() // throws for an unknown zone, before anything is cached
    cache.set(timeZone, f)
  }
  return f
}

/** The calendar day of an instant in a time zone, e.g. ('2026-12-01T23:30:00Z', 'Europe/Berlin') → '2026-12-02'. */
export function dayInZone(instant: Date | string | number, timeZone: string): string {
  const f = formatter(dayFormats, timeZone, () => new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }))
  const parts = f.formatToParts(new Date(instant))
  const get = (t: string) => parts.find((p) => p.type === t)?.value ?? ''
  return `${get('year')}-${get('month')}-${get('day')}`
}

/** 'HH:MM' (24 h) of an instant in a time zone. */
export function timeInZone(instant: Date | string | number, timeZone: string): string {
  const f = formatter(timeFormats, timeZone, () => new Intl.DateTimeFormat('en-GB', { timeZone, hour: '2-digit', minute: '2-digit', hourCycle: 'h23' }))
  return f.format(new Date(instant))
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
