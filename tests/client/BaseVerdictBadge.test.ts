import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import BaseVerdictBadge from '@/components/BaseVerdictBadge.vue'

const CASES = [
  { verdict: 'pass', word: 'Pass', shape: 'circle' },
  { verdict: 'marginal', word: 'Marginal', shape: 'path' },
  { verdict: 'fail', word: 'Fail', shape: 'rect' },
  { verdict: 'incomplete', word: 'Incomplete', shape: 'circle' },
] as const

describe('BaseVerdictBadge', () => {
  it.each(CASES)('when the verdict is $verdict, then it shows the $word word beside its own icon shape', ({ verdict, word, shape }) => {
    const wrapper = mount(BaseVerdictBadge, { props: { verdict } })
    expect(wrapper.find('.word').text()).toBe(word)
    const svg = wrapper.find('svg')
    expect(svg.attributes('aria-hidden')).toBe('true')
    expect(svg.attributes('data-shape')).toBe(verdict)
    expect(svg.find(shape).exists()).toBe(true)
    expect(wrapper.classes()).toContain(verdict)
  })

  it('when each verdict is drawn, then no two share the same icon drawing', () => {
    const drawings = CASES.map(({ verdict }) => mount(BaseVerdictBadge, { props: { verdict } }).find('svg').html())
    expect(new Set(drawings).size).toBe(CASES.length)
  })

  it('when the tick, ring and cross are drawn, then the pass circle is filled with a tick and the incomplete ring is hollow', () => {
    const pass = mount(BaseVerdictBadge, { props: { verdict: 'pass' } }).find('svg')
    expect(pass.find('circle').attributes('fill')).toBe('currentColor')
    expect(pass.find('path').exists()).toBe(true)
    const ring = mount(BaseVerdictBadge, { props: { verdict: 'incomplete' } }).find('svg')
    expect(ring.find('circle').attributes('fill')).toBe('none')
    expect(ring.find('path').exists()).toBe(false)
    const fail = mount(BaseVerdictBadge, { props: { verdict: 'fail' } }).find('svg')
    expect(fail.find('rect').exists()).toBe(true)
    expect(fail.find('path').attributes('d')).toContain('M16.4 7.6')
  })

  it('when a message is given, then it is shown and the status label carries the word and the message', () => {
    const wrapper = mount(BaseVerdictBadge, { props: { verdict: 'fail', message: 'Oil pressure 18 psid is below the minimum 25 psid' } })
    expect(wrapper.attributes('role')).toBe('status')
    expect(wrapper.attributes('aria-label')).toBe('Fail: Oil pressure 18 psid is below the minimum 25 psid')
    expect(wrapper.find('.message').text()).toBe('Oil pressure 18 psid is below the minimum 25 psid')
  })

  it('when no message is given, then the label is the word alone and no empty message line is drawn', () => {
    const wrapper = mount(BaseVerdictBadge, { props: { verdict: 'marginal' } })
    expect(wrapper.attributes('aria-label')).toBe('Marginal')
    expect(wrapper.find('.message').exists()).toBe(false)
  })

  it('when the large size is asked for, then the badge and its icon grow; small is the default', () => {
    const small = mount(BaseVerdictBadge, { props: { verdict: 'pass' } })
    const large = mount(BaseVerdictBadge, { props: { verdict: 'pass', size: 'large' } })
    expect(small.classes()).toContain('small')
    expect(large.classes()).toContain('large')
    expect(Number(large.find('svg').attributes('width'))).toBeGreaterThan(Number(small.find('svg').attributes('width')))
    expect(Number(large.find('svg').attributes('width'))).toBeGreaterThanOrEqual(28)
  })
})

describe('BaseVerdictBadge with its own word', () => {
  it('when a word is given, then it replaces the verdict word and the shape stays', () => {
    const wrapper = mount(BaseVerdictBadge, { props: { verdict: 'marginal', word: 'Genuine, but superseded' } })
    expect(wrapper.text()).toContain('Genuine, but superseded')
    expect(wrapper.text()).not.toContain('Marginal')
    expect(wrapper.find('svg').attributes('data-shape')).toBe('marginal')
    expect(wrapper.attributes('aria-label')).toBe('Genuine, but superseded')
  })
})
