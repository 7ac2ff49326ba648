// How a size reads on screen: always with units, in the order the trade says it.
export function sizeText(i: { kind: string; diameterMm: number | null; lengthMm: number | null; angleDeg: number | null; side: string | null }): string {
  if (i.kind === 'nail') return `${i.diameterMm} × ${i.lengthMm} mm, ${i.angleDeg}°${i.side ? `, ${i.side}` : ''}`
  if (i.kind === 'head_element' || i.kind === 'distal_screw') return `${i.lengthMm} mm${i.diameterMm ? ` (Ø ${i.diameterMm} mm)` : ''}`
  return i.lengthMm ? `${i.lengthMm} mm` : ''
}
