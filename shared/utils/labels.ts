// Words shown for stored codes (DESIGN.md vocabulary).
export const PROCEDURE_LABEL: Record<'short_nail' | 'long_nail', string> = {
  short_nail: 'Short nail',
  long_nail: 'Long nail',
}

export const STATUS_LABEL: Record<'planned' | 'open' | 'closed' | 'signed', string> = {
  planned: 'Planned',
  open: 'Open',
  closed: 'Closed',
  signed: 'Signed',
}
