import { z } from 'zod'
import { isIsoDay } from '../utils/dates'

export const IsoDay = z.string().refine(isIsoDay, 'Use a date as YYYY-MM-DD.')
export const Id = z.coerce.number().int().positive()
export const IdParams = z.object({ id: Id })
export const ClientKey = z.uuid('clientKey must be a UUID made by the device.')

export const CasesQuery = z.object({
  day: IsoDay.optional(),
})
export type CasesQuery = z.infer<typeof CasesQuery>

const name = (what: string) => z.string().trim().min(1, `Enter the ${what}.`).max(120, `The ${what} is too long (120 characters at most).`)

export const PatientInput = z.object({
  mrn: z.string().trim().min(1, 'Enter the MRN.').max(40, 'The MRN is too long (40 characters at most).'),
  familyName: name('family name'),
  givenName: name('given name'),
  birthDate: IsoDay.refine((d) => d >= '1900-01-01' && d <= new Date().toISOString().slice(0, 10), 'The date of birth must lie between 1900 and today.'),
  sex: z.enum(['female', 'male', 'other', 'unknown'], 'Choose female, male, other or unknown.'),
})

export const NewCaseBody = z.object({
  patient: PatientInput,
  procedure: z.enum(['short_nail', 'long_nail'], 'Choose short nail or long nail.'),
  side: z.enum(['left', 'right'], 'Choose the side: left or right.'),
  surgeonId: z.coerce.number({ error: 'Choose the surgeon.' }).int().positive('Choose the surgeon.'),
  theatreId: z.coerce.number({ error: 'Choose the theatre.' }).int().positive('Choose the theatre.'),
  /** Local date and time in the facility's time zone */
  scheduledDay: IsoDay,
  scheduledTime: z.string().regex(/^([01]\d|2[0-3]):[0-5]\d$/, 'Use a time as HH:MM (24 hours).'),
  clientKey: ClientKey,
})
export type NewCaseBody = z.infer<typeof NewCaseBody>

/**
 * What each gauge can read, in the order the operation produces the readings. Ranges are generous
 * plausibility limits (common practice), not sizing rules: the engine decides sizes against the shelf.
 */
export const READING_SPEC = {
  reamed_diameter: { label: 'Last reamer', unit: 'mm', min: 7, max: 20, step: 0.5, help: 'Diameter of the last reamer that passed, in 0.5 mm steps.' },
  nail_length: { label: 'Nail length', unit: 'mm', min: 120, max: 500, step: 1, help: 'Read over the guide wire with the length gauge.' },
  native_angle: { label: 'Neck-shaft angle', unit: 'deg', min: 110, max: 150, step: 0.5, help: 'Native or contralateral neck-shaft angle.' },
  head_element_length: { label: 'Head element reading', unit: 'mm', min: 50, max: 150, step: 1, help: 'Read over the guide wire with the head-element gauge.' },
  head_compression: { label: 'Planned compression', unit: 'mm', min: 0, max: 15, step: 1, help: 'Length taken off the reading for compression (0 for none).' },
  distal_depth: { label: 'Distal screw depth', unit: 'mm', min: 16, max: 100, step: 1, help: 'Depth gauge reading for this locking hole.' },
  tad_ap_tip_apex: { label: 'AP tip–apex', unit: 'mm', min: 1, max: 80, step: 0.1, help: 'Measured on the AP image.' },
  tad_ap_screw_diameter: { label: 'AP head-element width', unit: 'mm', min: 2, max: 40, step: 0.1, help: 'Head element diameter as measured on the AP image.' },
  tad_lat_tip_apex: { label: 'Lateral tip–apex', unit: 'mm', min: 1, max: 80, step: 0.1, help: 'Measured on the lateral image.' },
  tad_lat_screw_diameter: { label: 'Lateral head-element width', unit: 'mm', min: 2, max: 40, step: 0.1, help: 'Head element diameter as measured on the lateral image.' },
  tad_true_screw_diameter: { label: 'True head-element diameter', unit: 'mm', min: 2, max: 20, step: 0.1, help: 'From the pack label.' },
} as const
export type ReadingKind = keyof typeof READING_SPEC
export const READING_KINDS = Object.keys(READING_SPEC) as ReadingKind[]

function multipleOf(value: number, step: number): boolean {
  // compare in hundredths: the readings carry at most two decimals
  return Math.round(value * 100) % Math.round(step * 100) === 0
}

export const ReadingBody = z.object({
  kind: z.enum(READING_KINDS as [ReadingKind, ...ReadingKind[]], 'Unknown reading.'),
  slot: z.coerce.number().int().min(0).max(9).default(0),
  value: z.coerce.number({ error: 'Enter a number.' }).finite('Enter a number.'),
  note: z.string().trim().max(500).optional(),
  clientKey: ClientKey,
}).superRefine((r, ctx) => {
  const spec = READING_SPEC[r.kind]
  const unit = spec.unit === 'deg' ? '°' : ' mm'
  if (r.value < spec.min || r.value > spec.max) {
    ctx.addIssue({ code: 'custom', path: ['value'], message: `${spec.label} must be between ${spec.min}${unit} and ${spec.max}${unit}.` })
  } else if (!multipleOf(r.value, spec.step)) {
    ctx.addIssue({ code: 'custom', path: ['value'], message: `${spec.label} goes in ${spec.step}${unit} steps; check the gauge.` })
  }
  if (r.kind === 'distal_depth' && (r.slot < 1 || r.slot > 4)) {
    ctx.addIssue({ code: 'custom', path: ['slot'], message: 'Distal screws are numbered 1 to 4.' })
  }
  if (r.kind !== 'distal_depth' && r.slot !== 0) {
    ctx.addIssue({ code: 'custom', path: ['slot'], message: 'Only distal screws have a number.' })
  }
})
export type ReadingBody = z.infer<typeof ReadingBody>

export const DecisionBody = z.object({
  component: z.enum(['nail', 'head_element', 'distal_screw']),
  slot: z.coerce.number().int().min(0).max(9).default(0),
  chosenItemId: z.coerce.number({ error: 'Choose a size.' }).int().positive('Choose a size.'),
  reason: z.string().trim().max(500).optional(),
  guideAcknowledged: z.boolean().optional(),
  clientKey: ClientKey,
})
export type DecisionBody = z.infer<typeof DecisionBody>

/**
 * The rules of a decision that depend on what the engine proposed, checked the same way by the form
 * (which shows the proposal) and by the route (which works it out again on the live shelf).
 */
export function decisionFor(proposedItemId: number | null) {
  return DecisionBody.superRefine((b, ctx) => {
    if (b.chosenItemId !== proposedItemId && !b.reason) {
      ctx.addIssue({ code: 'custom', path: ['reason'], message: 'Give a reason when the chosen size differs from the proposed size.' })
    }
    if (b.component === 'nail' && b.guideAcknowledged !== true) {
      ctx.addIssue({ code: 'custom', path: ['guideAcknowledged'], message: 'Confirm that the aiming guide is set to the same angle and side as the nail.' })
    }
  })
}
