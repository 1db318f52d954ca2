import { init, use, type EChartsCoreOption } from 'echarts/core'
import { LineChart } from 'echarts/charts'
import { GridComponent, MarkAreaComponent, MarkLineComponent, MarkPointComponent } from 'echarts/components'
import { SVGRenderer } from 'echarts/renderers'
import { formatNumber } from '@shared/units'
import type { RampView } from './view-model'

use([SVGRenderer, LineChart, GridComponent, MarkLineComponent, MarkAreaComponent, MarkPointComponent])

// Print colours from the product palette; every line also differs by dash pattern and carries a label, so the chart
// reads on a monochrome printer too.
const INK = {
  reading: '#0E5E66',
  setpoint: '#2B3136',
  warnFloor: '#9A6410',
  floor: '#B3261E',
  hold: 'rgba(63, 125, 58, 0.14)',
  holdEdge: '#3F7D3A',
  axis: '#4A545B',
  grid: '#E4DCCD',
}
const FONT = "'Source Sans 3', sans-serif"

function niceCeiling(v: number): number {
  if (!(v > 0)) return 1
  const magnitude = 10 ** Math.floor(Math.log10(v))
  for (const step of [1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10]) if (step * magnitude >= v - 1e-9) return step * magnitude
  return 10 * magnitude
}

function valueAt(points: ReadonlyArray<readonly [number, number]>, t: number): number {
  if (t <= points[0][0]) return points[0][1]
  for (let i = 1; i < points.length; i++) {
    const [t0, v0] = points[i - 1]
    const [t1, v1] = points[i]
    if (t <= t1) return v0 + ((v1 - v0) * (t - t0)) / (t1 - t0)
  }
  return points[points.length - 1][1]
}

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v)

/**
 * The oil-pressure ramp as an SVG string (vector, no script): readings, setpoint, floor and warning level, the
 * time allowed to reach the setpoint, the hold window from reaching it to the drive start, and the drive start.
 */
export function rampChartSvg(ramp: RampView, size: { width: number; height: number } = { width: 660, height: 300 }): string {
  const points = ramp.points.filter((p) => isNum(p[0]) && isNum(p[1]))
  if (points.length < 2) return ''
  const unit = ramp.unit.replace(/\s*\(.*\)$/, '')
  const v = (x: number) => `${formatNumber(x, Math.abs(x) >= 100 ? 0 : 1)} ${unit}`
  const s = (x: number) => `${formatNumber(x, 1)} s`
  const holdEnd = isNum(ramp.reachedAtS) ? (isNum(ramp.driveStartS) && ramp.driveStartS >= ramp.reachedAtS ? ramp.driveStartS : isNum(ramp.holdS) ? ramp.reachedAtS + ramp.holdS : null) : null
  const times = [...points.map((p) => p[0]), ramp.driveStartS, ramp.reachWithinS, holdEnd].filter(isNum)
  const values = [...points.map((p) => p[1]), ramp.setpoint, ramp.floor, ramp.warnFloor].filter(isNum)
  const tMax = niceCeiling(Math.max(10, ...times) * 1.05)
  const vMax = niceCeiling(Math.max(1, ...values) * 1.18)

  const label = (text: string, colour: string, position: string, extra: Record<string, unknown> = {}) => ({
    formatter: text,
    position,
    color: colour,
    fontFamily: FONT,
    fontSize: 11,
    fontWeight: 600,
    backgroundColor: 'rgba(255,255,255,0.9)',
    padding: [1, 3],
    ...extra,
  })
  const lines: Array<Record<string, unknown>> = []
  if (isNum(ramp.setpoint)) lines.push({ yAxis: ramp.setpoint, lineStyle: { color: INK.setpoint, type: 'solid', width: 1.6 }, label: label(`Setpoint ${v(ramp.setpoint)}`, INK.setpoint, 'insideEndTop') })
  if (isNum(ramp.warnFloor)) lines.push({ yAxis: ramp.warnFloor, lineStyle: { color: INK.warnFloor, type: [6, 3], width: 1.2 }, label: label(`Marginal below ${v(ramp.warnFloor)}`, INK.warnFloor, 'insideEndBottom') })
  if (isNum(ramp.floor)) lines.push({ yAxis: ramp.floor, lineStyle: { color: INK.floor, type: [2, 2], width: 1.6 }, label: label(`Floor ${v(ramp.floor)}`, INK.floor, 'insideEndBottom') })
  if (isNum(ramp.reachWithinS)) lines.push({ xAxis: ramp.reachWithinS, lineStyle: { color: INK.axis, type: [1, 3], width: 1.4 }, label: label(`Reach by ${s(ramp.reachWithinS)}`, INK.axis, 'end', { distance: 16 }) })
  if (isNum(ramp.driveStartS)) lines.push({ xAxis: ramp.driveStartS, lineStyle: { color: INK.setpoint, type: 'solid', width: 2 }, label: label(`Drive start ${s(ramp.driveStartS)}`, INK.setpoint, 'end', { distance: 2, fontWeight: 700 }) })

  const areas: unknown[] = []
  if (isNum(ramp.reachedAtS) && holdEnd !== null) {
    const measured = isNum(ramp.driveStartS) && ramp.driveStartS >= ramp.reachedAtS
    areas.push([
      {
        name: measured ? `Hold ${s(holdEnd - ramp.reachedAtS)}` : `Hold ${s(holdEnd - ramp.reachedAtS)} needed`,
        xAxis: ramp.reachedAtS,
        itemStyle: { color: INK.hold, borderColor: INK.holdEdge, borderWidth: 1, borderType: 'dashed' },
      },
      { xAxis: holdEnd },
    ])
  }
  const pins = isNum(ramp.driveStartS)
    ? [{ coord: [ramp.driveStartS, valueAt(points, ramp.driveStartS)], symbol: 'diamond', symbolSize: 12, itemStyle: { color: '#FFFFFF', borderColor: INK.setpoint, borderWidth: 2 }, label: { show: false } }]
    : []

  const chart = init(null, null, { renderer: 'svg', ssr: true, width: size.width, height: size.height })
  try {
    chart.setOption({
      animation: false,
      textStyle: { fontFamily: FONT },
      grid: { left: 56, right: 16, top: 40, bottom: 44 },
      xAxis: {
        type: 'value',
        min: 0,
        max: tMax,
        name: 'Seconds from the oil pump start (s)',
        nameLocation: 'middle',
        nameGap: 26,
        nameTextStyle: { color: INK.axis, fontSize: 11, fontFamily: FONT },
        axisLabel: { color: INK.axis, fontSize: 11, fontFamily: FONT },
        axisLine: { lineStyle: { color: INK.axis } },
        splitLine: { lineStyle: { color: INK.grid } },
      },
      yAxis: {
        type: 'value',
        min: 0,
        max: vMax,
        name: `Oil pressure (${ramp.unit})`,
        nameLocation: 'middle',
        nameGap: 38,
        nameTextStyle: { color: INK.axis, fontSize: 11, fontFamily: FONT },
        axisLabel: { color: INK.axis, fontSize: 11, fontFamily: FONT },
        axisLine: { show: true, lineStyle: { color: INK.axis } },
        splitLine: { lineStyle: { color: INK.grid } },
      },
      series: [
        {
          name: 'Readings',
          type: 'line',
          data: points,
          showSymbol: true,
          symbol: 'circle',
          symbolSize: 6,
          lineStyle: { color: INK.reading, width: 2.4 },
          itemStyle: { color: INK.reading, borderColor: '#FFFFFF', borderWidth: 1 },
          markLine: { silent: true, symbol: ['none', 'none'], animation: false, data: lines },
          markArea: { silent: true, animation: false, label: { position: 'insideTop', color: '#2C5A28', fontWeight: 600, fontSize: 11, fontFamily: FONT, distance: 4 }, data: areas },
          markPoint: { silent: true, animation: false, data: pins },
        },
      ],
    } satisfies EChartsCoreOption)
    return chart.renderToSVGString()
  } finally {
    chart.dispose()
  }
}
