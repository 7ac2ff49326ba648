import { describe, expect, it } from 'vitest'
import { hasRole, isRole, navFor, ROLES } from '../../../../shared/utils/roles'
import { passwordProblems } from '../../../../shared/utils/password'
import { IDLE_MS, SHIFT_MS, sessionExpiry } from '../../../../shared/utils/session-rules'

describe('role helper', () => {
  it('knows exactly the five roles', () => {
    expect([...ROLES].sort()).toEqual(['admin', 'circulator', 'coordinator', 'scrub', 'surgeon'])
    expect(isRole('nurse')).toBe(false)
    expect(isRole('Admin')).toBe(false)
  })
  it('allows only listed roles; nobody for an empty list; nobody without a user', () => {
    expect(hasRole({ role: 'scrub' }, ['scrub', 'circulator'])).toBe(true)
    expect(hasRole({ role: 'scrub' }, ['surgeon'])).toBe(false)
    expect(hasRole({ role: 'scrub' }, [])).toBe(false)
    expect(hasRole(null, ['scrub'])).toBe(false)
    expect(hasRole({ role: 'root' }, ['admin'])).toBe(false)
  })
  it('navigation shows each role only its screens', () => {
    const all = ['/', '/trace', '/recalls', '/shelf', '/catalog', '/people', '/settings', '/audit']
    expect(navFor('admin', all).map((n) => n.to)).toEqual(all)
    expect(navFor('scrub', all).map((n) => n.to)).toEqual(['/'])
    expect(navFor('coordinator', all).map((n) => n.to)).not.toContain('/people')
    // screens not yet built are hidden even when the role may open them
    expect(navFor('admin', ['/']).map((n) => n.to)).toEqual(['/'])
  })
})

// NIST SP 800-63B §5.1.1.2 (length over composition); our minimum is 12.
describe('password policy', () => {
  it('accepts a long passphrase', () => {
    expect(passwordProblems('isthmus-demo')).toEqual([])
    expect(passwordProblems('correct horse battery staple')).toEqual([])
  })
  it('refuses short, repetitive or personal passwords, saying what to fix', () => {
    expect(passwordProblems('short1')).toEqual(['Use at least 12 characters.'])
    expect(passwordProblems('aaaaaaaaaaaaaa')).toContain('Use more than three different characters.')
    expect(passwordProblems('nora.quill-2026', { email: 'nora.quill@demo.isthmus.test' })).toContain('Do not use your e-mail name in the password.')
    expect(passwordProblems('my-name-is-quill', { name: 'Nora Quill' })).toContain('Do not use your name in the password.')
    expect(passwordProblems('x'.repeat(129)).join(' ')).toMatch(/at most 128/)
  })
})

describe('session lifetime', () => {
  const now = 1_800_000_000_000
  it('is good inside the shift and the idle window', () => {
    expect(sessionExpiry({ loggedInAt: now - SHIFT_MS, lastSeenAt: now - IDLE_MS }, now)).toBeNull()
  })
  it('ends one millisecond past 30 minutes idle', () => {
    expect(sessionExpiry({ loggedInAt: now - 1000, lastSeenAt: now - IDLE_MS - 1 }, now)).toBe('idle')
  })
  it('ends one millisecond past 12 hours, even when active', () => {
    expect(sessionExpiry({ loggedInAt: now - SHIFT_MS - 1, lastSeenAt: now }, now)).toBe('shift')
  })
  it('treats a session without times as ended', () => {
    expect(sessionExpiry({}, now)).toBe('shift')
    expect(sessionExpiry({ loggedInAt: now }, now)).toBe('idle')
  })
})
