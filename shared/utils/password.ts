// Password policy for staff accounts. Length matters more than character classes
// (NIST SP 800-63B §5.1.1.2: at least 8, allow at least 64; we ask 12 for shared clinical devices).
export const PASSWORD_MIN = 12
export const PASSWORD_MAX = 128

export function passwordProblems(password: string, context: { email?: string; name?: string } = {}): string[] {
  const problems: string[] = []
  if (password.length < PASSWORD_MIN) problems.push(`Use at least ${PASSWORD_MIN} characters.`)
  if (password.length > PASSWORD_MAX) problems.push(`Use at most ${PASSWORD_MAX} characters.`)
  if (password.length > 0 && new Set(password).size < 4) problems.push('Use more than three different characters.')
  const lower = password.toLowerCase()
  const local = context.email?.split('@')[0]?.toLowerCase()
  if (local && local.length >= 4 && lower.includes(local)) problems.push('Do not use your e-mail name in the password.')
  if (context.name) {
    for (const part of context.name.toLowerCase().split(/\s+/)) {
      if (part.length >= 4 && lower.includes(part)) { problems.push('Do not use your name in the password.'); break }
    }
  }
  return problems
}
