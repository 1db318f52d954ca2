import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import BaseCautionList from '@/components/BaseCautionList.vue'

describe('BaseCautionList', () => {
  it('when given cautions and a deferral, then every caution is listed as a note with the deferral text', () => {
    const wrapper = mount(BaseCautionList, {
      props: { title: 'Before any start-up', cautions: ['Lock out and tag out first.', 'Never bypass a safety control.'] },
      slots: { default: "Follow the manufacturer's instructions." },
    })
    expect(wrapper.attributes('role')).toBe('note')
    expect(wrapper.findAll('li').map((li) => li.text())).toEqual(['Lock out and tag out first.', 'Never bypass a safety control.'])
    expect(wrapper.find('.defer').text()).toBe("Follow the manufacturer's instructions.")
  })
})
