import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import BaseRampChart, { holdWindowEnd, niceCeiling, rampChartOption, valueAt, type RampChartInput } from '@/components/BaseRampChart.vue'

interface LineDatum { name: string; xAxis?: number; yAxis?: number; lineStyle: { type: string }; label: { formatter: string } }
interface AreaEnd { name?: string; xAxis: number }
interface PointDatum { name: string; coord: [number, number] }
interface Series {
  type: string
  data: Array<[number, number]>
  markLine: { data: LineDatum[] }
  markArea: { data: Array<[AreaEnd, AreaEnd]> }
  markPoint: { data: PointDatum[] }
}

function parts(input: RampChartInput) {
  const option = rampChartOption(input) as unknown as { series: Series[]; xAxis: { name: string; max: number }; yAxis: { name: string; max: number; min: number } }
  const series = option.series[0]
  const line = (name: string) => series.markLine.data.find((d) => d.name === name)
  return { option, series, line }
}

const ramp: RampChartInput = {
  points: [[0, 0], [4, 14], [8, 31], [10, 36], [20, 37], [31, 36.5], [36, 33]],
  unit: 'psid',
  setpoint: 35,
  floor: 25,
  warnFloor: 30,
  reachWithinS: 30,
  holdS: 20,
  reachedAtS: 9.6,
  driveStartS: 31,
}

describe('rampChartOption', () => {
  it('when a full ramp is drawn, then the setpoint is a solid level, the floor and warning level dashed, each labelled with its value', () => {
    const { line } = parts(ramp)
    expect(line('Setpoint')).toMatchObject({ yAxis: 35, lineStyle: { type: 'solid' }, label: { formatter: 'Setpoint 35 psid' } })
    expect(line('Floor')).toMatchObject({ yAxis: 25, lineStyle: { type: 'dashed' }, label: { formatter: 'Floor 25 psid' } })
    expect(line('Warning level')).toMatchObject({ yAxis: 30, lineStyle: { type: 'dashed' }, label: { formatter: 'Marginal below 30 psid' } })
  })

  it('when the drive start is known, then the hold window is shaded from the setpoint to the drive start, which is marked', () => {
    const { series, line } = parts(ramp)
    expect(series.markArea.data).toHaveLength(1)
    const [from, to] = series.markArea.data[0]
    expect(from.xAxis).toBe(9.6)
    expect(to.xAxis).toBe(31)
    expect(from.name).toBe('Hold 21.4 s')
    expect(line('Drive start')).toMatchObject({ xAxis: 31, label: { formatter: 'Drive start 31 s' } })
    expect(line('Reach by')).toMatchObject({ xAxis: 30, label: { formatter: 'Reach by 30 s' } })
    expect(series.markPoint.data).toEqual([expect.objectContaining({ name: 'Drive start', coord: [31, 36.5] })])
  })

  it('when the drive has not started yet, then the window shows the hold still needed and no drive start is drawn', () => {
    const { series, line } = parts({ ...ramp, points: ramp.points.slice(0, 4), driveStartS: null })
    const [from, to] = series.markArea.data[0]
    expect([from.xAxis, to.xAxis]).toEqual([9.6, 29.6])
    expect(from.name).toBe('Hold 20 s needed')
    expect(line('Drive start')).toBeUndefined()
    expect(series.markPoint.data).toEqual([])
  })

  it('when the setpoint was never reached, then there is no hold window', () => {
    const { series } = parts({ ...ramp, points: [[0, 0], [10, 20]], reachedAtS: null, driveStartS: null })
    expect(series.markArea.data).toEqual([])
  })

  it('when points come unsorted, then the line is drawn in time order and the axes name their units', () => {
    const { option, series } = parts({ ...ramp, points: [[8, 31], [0, 0], [4, 14]] })
    expect(series.type).toBe('line')
    expect(series.data).toEqual([[0, 0], [4, 14], [8, 31]])
    expect(option.xAxis.name).toBe('Seconds from oil pump start (s)')
    expect(option.yAxis.name).toBe('Pressure (psid)')
  })

  it('when the axes are scaled, then they take round bounds covering the readings, the setpoint and the drive start', () => {
    const { option } = parts(ramp)
    expect(option.xAxis.max).toBe(40)
    expect(option.yAxis.max).toBe(50)
    expect(option.yAxis.min).toBe(0)
    const si = parts({ points: [[0, 0], [10, 245], [32, 250]], unit: 'kPa (diff)', setpoint: 241.3, floor: 172.4, reachedAtS: 9.7, driveStartS: 32 })
    expect(si.option.yAxis.max).toBe(300)
    expect(si.option.yAxis.name).toBe('Pressure (kPa (diff))')
    expect(si.line('Setpoint')!.label.formatter).toBe('Setpoint 241 kPa')
  })

  it('when only the readings are known, then no rule lines are drawn', () => {
    const { series } = parts({ points: [[0, 0], [5, 10]], unit: 'psid' })
    expect(series.markLine.data).toEqual([])
    expect(series.markArea.data).toEqual([])
  })
})

describe('ramp chart helpers', () => {
  it('when asked for round bounds, then they step through 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8 of each power of ten', () => {
    expect([9, 10, 11, 37, 43.2, 290, 0.7].map(niceCeiling)).toEqual([10, 10, 12, 40, 50, 300, 0.8])
  })
  it('when asked for the reading between points, then it interpolates and holds flat past the ends', () => {
    const pts: Array<[number, number]> = [[0, 0], [10, 20], [20, 30]]
    expect([valueAt(pts, -1), valueAt(pts, 5), valueAt(pts, 15), valueAt(pts, 40)]).toEqual([0, 10, 25, 30])
    expect(valueAt([], 3)).toBeNull()
  })
  it('when the drive start comes before the setpoint, then the window falls back to the required hold', () => {
    expect(holdWindowEnd({ reachedAtS: 12, driveStartS: 8, holdS: 20 })).toBe(32)
    expect(holdWindowEnd({ reachedAtS: 12, driveStartS: null, holdS: 0 })).toBeNull()
  })
})

describe('BaseRampChart', () => {
  it('when mounted, then it is one described figure sized to its height, the chart itself stubbed in jsdom', () => {
    const wrapper = mount(BaseRampChart, {
      props: { points: [[0, 0], [10, 36]], unit: 'psid', setpoint: 35, reachedAtS: 9.7, driveStartS: null, height: 240 },
      global: { stubs: { Echarts: true } },
    })
    const figure = wrapper.get('[data-test=ramp-chart]')
    expect(figure.attributes('role')).toBe('img')
    expect(figure.attributes('aria-label')).toBe('Pressure against time: 2 readings, highest 36 psid, setpoint 35 psid, reached at 9.7 s.')
    expect(figure.attributes('style')).toContain('height: 240px')
  })
})
