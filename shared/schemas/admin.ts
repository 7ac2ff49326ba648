// Requests of the admin screens (People, Settings, Audit): one schema per request, shared by form and route.
import { z } from 'zod'
import { ROLES, type Role } from '../utils/roles'
import { passwordProblems } from '../utils/password'
import { isTimeZone } from '../utils/dates'
import { parseUdi } from '../utils/udi'
import { ClientKey, Id, IsoDay } from './cases'

export const UserParams = z.object({ id: Id })

/** One person as the admin routes return them (never the password hash). */
export interface PersonView {
  id: number; name: string; email: string; role: Role; active: boolean
  createdAt: string; updatedAt: string; lastSignInAt: string | null
}

const personName = z.string('Enter the person’s full name.').trim()
  .min(1, 'Enter the person’s full name.').max(120, 'The name is too long (120 characters at most).')
// Stored in lower case: sign-in compares without regard to case, and one spelling avoids look-alike accounts.
const email = z.string('Enter the e-mail address.').trim().min(1, 'Enter the e-mail address.')
  .max(254, 'The e-mail address is too long.').email('Enter a valid e-mail address, e.g. name@hospital.example.')
  .transform((e) => e.toLowerCase())
const role = z.enum(ROLES, 'Choose a role.')
// The policy without context here, so the field speaks even while other fields are still wrong;
// the object-level checks add the name and e-mail rules.
const password = z.string('Enter a password.').max(256, 'Use at most 128 characters.').superRefine((pw, ctx) => {
  const m = passwordMessage(pw)
  if (m) ctx.addIssue({ code: 'custom', message: m })
})

/** All policy problems in one message, so the field says everything that needs fixing at once. */
export function passwordMessage(pw: string, context: { email?: string; name?: string } = {}): string | null {
  const problems = passwordProblems(pw, context)
  return problems.length ? problems.join(' ') : null
}

export const NewUserBody = z.object({
  name: personName,
  email,
  role,
  password,
  clientKey: ClientKey,
}).superRefine((v, ctx) => {
  // only what the field-level check could not know (name, e-mail), so no message is said twice
  const m = typeof v.password === 'string' && !passwordMessage(v.password) ? passwordMessage(v.password, { email: v.email, name: v.name }) : null
  if (m) ctx.addIssue({ code: 'custom', path: ['password'], message: m })
})
export type NewUserBody = z.infer<typeof NewUserBody>

export const UserUpdateBody = z.object({
  name: personName.optional(),
  role: role.optional(),
  active: z.boolean('Active is yes or no.').optional(),
}).refine((v) => v.name !== undefined || v.role !== undefined || v.active !== undefined, {
  message: 'Change the name, the role or whether the account is active.', path: ['name'],
})
export type UserUpdateBody = z.infer<typeof UserUpdateBody>

/** The route checks again with the person's own name and e-mail (passwordProblems context). */
export const PasswordResetBody = z.object({ password })
export type PasswordResetBody = z.infer<typeof PasswordResetBody>

const blankToUndefined = (v: unknown) => (v === '' || v === null ? undefined : v)

export const UsersQuery = z.object({
  role: z.preprocess(blankToUndefined, role.optional()),
  active: z.preprocess(blankToUndefined, z.enum(['true', 'false', 'all'], 'Choose active, deactivated or all.').optional())
    .transform((v) => (v === 'true' ? true : v === 'false' ? false : undefined)),
  q: z.string().trim().max(120).optional().transform((v) => (v ? v : undefined)),
})
export type UsersQuery = z.infer<typeof UsersQuery>

// ---- Settings -------------------------------------------------------------------------------

/** Hundredths at most: the profile is stored as numeric(4,2) / numeric(5,2). */
const hundredths = (n: number) => Math.abs(Math.round(n * 100) - n * 100) < 1e-6

/** Why a wedge-scanner substitute for GS cannot be used, or null when it can. */
export function gsSubstituteProblem(ch: string): string | null {
  if ([...ch].length !== 1) return 'Use exactly one character, such as ~ or |.'
  // The UDI parser owns the rule (no GS1 data character, no space, no ']'); ask it with an empty scan.
  const r = parseUdi('', { gsSubstitute: ch })
  if (!r.ok && r.error.code === 'bad_option') {
    return 'This character can occur in UDI data, so a lot or serial could be split in the wrong place. Use a character such as ~ or |.'
  }
  return null
}

export const SettingsBody = z.object({
  // 0.5–1.5 mm: one to three half-mm reamer steps (AO Surgery Reference; resolveRules in shared/utils/sizing.ts)
  nailClearanceMm: z.coerce.number({ error: 'Enter the nail clearance in mm.' })
    .min(0.5, 'Nail clearance must be from 0.5 to 1.5 mm.').max(1.5, 'Nail clearance must be from 0.5 to 1.5 mm.')
    .refine(hundredths, 'Use at most two decimals (e.g. 1.25 mm).'),
  distalScrewRounding: z.enum(['up', 'down'], 'Choose up or down.'),
  // the tip-apex distance warning limit; 25 mm is the usual one (Baumgaertner 1995); a limit past 60 mm would warn about nothing
  tadLimitMm: z.coerce.number({ error: 'Enter the tip-apex limit in mm.' })
    .gt(0, 'The tip-apex limit must be above 0 mm.').max(60, 'The tip-apex limit must be at most 60 mm.')
    .refine(hundredths, 'Use at most two decimals.'),
  // not trimmed: a space is itself a (refused) choice, and trimming would turn it silently into "none"
  gsSubstitute: z.string().max(8, 'Use exactly one character, such as ~ or |.').nullish()
    .transform((v) => (v ? v : null))
    .superRefine((v, ctx) => {
      const m = v === null ? null : gsSubstituteProblem(v)
      if (m) ctx.addIssue({ code: 'custom', message: m })
    }),
  recordsInbox: z.string().trim().max(254, 'The e-mail address is too long.').nullish()
    .transform((v) => (v ? v.toLowerCase() : null))
    .refine((v) => v === null || z.email().safeParse(v).success, 'Enter a valid e-mail address, or leave it empty to send no copies.'),
  timeZone: z.string('Choose the facility’s time zone.').trim().min(1, 'Choose the facility’s time zone.').max(64)
    .refine((tz) => isTimeZone(tz), 'Use a time zone name such as Europe/Berlin or America/New_York.'),
  /** the profile version the form was loaded with: a save over someone else's newer version is refused */
  baseVersion: z.coerce.number().int().min(0).nullish(),
})
export type SettingsBody = z.infer<typeof SettingsBody>

// ---- Audit and PHI access -------------------------------------------------------------------

const optionalDay = z.preprocess(blankToUndefined, IsoDay.optional())
const optionalText = (max: number) => z.string().trim().max(max).optional().transform((v) => (v ? v : undefined))
const dayRange = (q: { from?: string; to?: string }, ctx: z.RefinementCtx) => {
  if (q.from && q.to && q.from > q.to) ctx.addIssue({ code: 'custom', path: ['to'], message: 'The end date is before the start date.' })
}
const page = z.coerce.number().int().min(1).max(100000).default(1)
const pageSize = z.coerce.number().int().min(1).max(200).default(50)

export const AuditQuery = z.object({
  actor: z.preprocess(blankToUndefined, Id.optional()),
  /** "user" finds user.create, user.update …; "user.create" finds only that */
  action: optionalText(80),
  entity: optionalText(40),
  entityId: optionalText(40),
  from: optionalDay,
  to: optionalDay,
  page,
  pageSize,
}).superRefine(dayRange)
export type AuditQuery = z.infer<typeof AuditQuery>

export const PhiAccessQuery = z.object({
  user: z.preprocess(blankToUndefined, Id.optional()),
  action: optionalText(80),
  from: optionalDay,
  to: optionalDay,
  page,
  pageSize,
}).superRefine(dayRange)
export type PhiAccessQuery = z.infer<typeof PhiAccessQuery>

export const ROLE_HINT: Record<Role, string> = {
  circulator: 'Readings, sizes and the implant log in the room',
  scrub: 'Scans packs at the back table',
  surgeon: 'Confirms sizes and signs the record',
  coordinator: 'Trace, recalls, shelf and catalog',
  admin: 'People, settings and audit',
}

/** An operating room of the facility, as cases are booked into it. */
export const TheatreBody = z.object({
  code: z.string('Give the theatre a short code.').trim().toUpperCase()
    .regex(/^[A-Z0-9][A-Z0-9-]{0,9}$/, 'A code is 1 to 10 letters, digits or dashes, e.g. OR3.'),
  name: z.string('Name the theatre.').trim().min(2, 'Name the theatre, e.g. “Theatre 3”.').max(60, 'A name has at most 60 characters.'),
  active: z.boolean().default(true),
})
export type TheatreBody = z.infer<typeof TheatreBody>
