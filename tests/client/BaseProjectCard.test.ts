import { describe, expect, it } from 'vitest'
import { mount, RouterLinkStub } from '@vue/test-utils'
import type { ProjectSummary } from '@shared/types/api'
import BaseProjectCard from '@/components/BaseProjectCard.vue'

const project: ProjectSummary = {
  id: '7b1f5c1e-1111-4a5b-9c3d-000000000001',
  code: 'VXH-CUP',
  name: 'Central utility plant',
  siteName: 'Test hospital',
  siteAddress: '1 Test Way',
  timeZone: 'America/Chicago',
  unitSystem: 'IP',
  distributionList: [],
  reportPaper: 'Letter', siteElevationM: null, barometricKpa: null,
  memberCount: 4,
  equipmentCount: 2,
  closedAt: null,
  version: 1,
}

const mountCard = (p: ProjectSummary, now: Date) =>
  mount(BaseProjectCard, { props: { project: p, now }, global: { stubs: { RouterLink: RouterLinkStub } } })

describe('BaseProjectCard', () => {
  it("when shown, then the site time is the project's own time zone, not the browser's", () => {
    const noonUtc = new Date('2026-12-01T18:00:00Z')
    expect(mountCard(project, noonUtc).text()).toContain('12:00 PM CST')
    expect(mountCard({ ...project, timeZone: 'Asia/Tokyo' }, noonUtc).text()).toContain('3:00 AM GMT+9')
  })

  it('when the project works in SI, then the card says which units readings are in', () => {
    const card = mountCard({ ...project, unitSystem: 'SI' }, new Date())
    expect(card.text()).toContain('SI units (°C, kPa, L/s)')
    expect(mountCard(project, new Date()).text()).toContain('I-P units (°F, psig, gpm)')
  })

  it('when clicked, then it links to the project page', () => {
    const link = mountCard(project, new Date()).findComponent(RouterLinkStub)
    expect(link.props('to')).toEqual({ name: 'project', params: { projectId: project.id } })
  })
})
