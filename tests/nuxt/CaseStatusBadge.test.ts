import { describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import CaseStatusBadge from '~/components/CaseStatusBadge.vue'

// WCAG 2.2 SC 1.4.1 (Use of Color): each state differs in words and shape, not only in colour.
describe('CaseStatusBadge', () => {
  it.each([
    ['planned', 'Planned', 'circle'],
    ['open', 'Open', 'circle'],
    ['closed', 'Closed', 'rect'],
    ['signed', 'Signed', 'path'],
  ] as const)('%s shows its word and its own icon', async (status, word, shape) => {
    const w = await mountSuspended(CaseStatusBadge, { props: { status } })
    expect(w.text()).toBe(word)
    expect(w.find(`svg ${shape}`).exists()).toBe(true)
  })
  it('the four icons are not all alike', async () => {
    const html = await Promise.all((['planned', 'open', 'closed', 'signed'] as const).map(async (s) => (await mountSuspended(CaseStatusBadge, { props: { status: s } })).find('svg').html()))
    expect(new Set(html).size).toBe(4)
  })
})
